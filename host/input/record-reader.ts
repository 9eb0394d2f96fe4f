// Streaming framer for delimited record files (proto/jetlag.proto): each record is a varint
// byte length, then that many bytes.
//
// API
//   readRecords(input, { maxRecordBytes?, fileLabel? }): AsyncIterable<RawRecord>
//     input: a path ('-' is stdin) or a readable stream of bytes. gzip is detected by content
//     (first bytes 1f 8b) and inflated on the fly; offsets count uncompressed bytes.
//     Yields { bytes, offset } per record: bytes is the record body (without its length
//     prefix), offset the byte offset of the record's length varint in the uncompressed stream.
//     After every complete record before a problem has been yielded, a framing problem throws
//     InputError("<file>, byte <offset>: <detail>"): a length above maxRecordBytes (default
//     64 MiB), a length varint longer than 10 bytes or above 2^32 - 1, a truncated record,
//     corrupt or truncated gzip, or a read error. A framing error names the event too: the
//     event number read from the start of a cut record ("<file>, event N, byte B"), else the
//     event of the record before it ("... (the record after event N)"); event and jets
//     records both keep their event number in field 1, the header record has none.
//   framedRecords(chunks, label, maxRecordBytes?): the same over chunks from readChunks().
//   readChunks(input, label?): the uncompressed chunks of an input (gzip by content).
//   RecordFramer: the synchronous core (feed chunks, get records through a callback), for
//     callers that want no promise per record.
//
// Memory: at most one chunk plus one partial record (bounded by maxRecordBytes) is held.
// Framer state between chunks: a length varint cut by a chunk end (value so far, byte count)
// or a record body cut by a chunk end (its own Uint8Array of the full length, bytes filled).
// Yielded bytes: a record lying inside one input chunk is a view (subarray) of that chunk, no
// copy; a record spanning chunks is copied once into its own buffer. The bytes are never
// overwritten afterwards, so they may be retained; but a view keeps its whole chunk alive,
// and bytes.buffer is shared with other records, so copy (slice) before transferring it to
// another thread or keeping many records for long.

import { createReadStream } from 'node:fs';
import { createGunzip } from 'node:zlib';
import { Readable } from 'node:stream';
import { InputError } from '../errors.js';

export const DEFAULT_MAX_RECORD_BYTES = 64 * 1024 * 1024;
/** read size for files: large enough that most records lie inside one chunk */
const FILE_CHUNK_BYTES = 1 << 20;

export interface RawRecord {
  /** record body, without its length prefix */
  bytes: Uint8Array;
  /** byte offset of the record's length varint in the uncompressed stream */
  offset: number;
  /** the record's place in the file (from 0), when a reader skips records (a shard read through an index) */
  recordNumber?: number;
}

export interface ReadRecordsOptions {
  maxRecordBytes?: number;
  /** name used in error texts (default: the path, '<stdin>' for '-', '<stream>' for a stream) */
  fileLabel?: string;
}

export type RecordSink = (bytes: Uint8Array, offset: number) => void;

/**
 * The framing state machine. feed() takes chunks in order and calls `emit` for each complete
 * record; a framing error is remembered (not thrown) so the caller can first pass on the
 * records emitted before it; finish() reports a record left incomplete at end of input.
 */
export class RecordFramer {
  readonly maxRecordBytes: number;
  /** uncompressed bytes fed so far */
  consumed = 0;
  /** first framing problem: detail text and record offset; nothing is framed after it */
  problem: { detail: string; offset: number } | null = null;

  // the record being assembled across chunks
  private recordOffset = 0;
  private lengthValue = 0;
  private lengthScale = 1;
  private lengthBytes = 0; // > 0 while a length varint is split across chunks
  private body: Uint8Array | null = null; // set while a body is split across chunks
  private bodyFilled = 0;

  constructor(maxRecordBytes = DEFAULT_MAX_RECORD_BYTES) {
    if (!Number.isInteger(maxRecordBytes) || maxRecordBytes < 0) {
      throw new Error(`maxRecordBytes must be a non-negative integer, got ${maxRecordBytes}`);
    }
    this.maxRecordBytes = maxRecordBytes;
  }

  feed(chunk: Uint8Array, emit: RecordSink): void {
    if (this.problem) return;
    const base = this.consumed;
    this.consumed += chunk.length;
    const end = chunk.length;
    let pos = 0;

    // finish a record split across chunks
    if (this.lengthBytes > 0) {
      pos = this.continueLength(chunk, 0);
      if (pos < 0) return; // still incomplete, or failed
      if (!this.startBody(chunk, pos, emit)) return;
      pos = this.afterStart;
    }
    if (this.body !== null) {
      const need = this.body.length - this.bodyFilled;
      const take = Math.min(need, end - pos);
      this.body.set(chunk.subarray(pos, pos + take), this.bodyFilled);
      this.bodyFilled += take;
      pos += take;
      if (this.bodyFilled < this.body.length) return;
      const done = this.body;
      this.body = null;
      emit(done, this.recordOffset);
    }

    // records inside this chunk: views, no copies
    while (pos < end) {
      const start = pos;
      let length = 0;
      let b = chunk[pos++];
      if (b < 0x80) {
        length = b;
      } else {
        // multi-byte length: finish it here if it is all in this chunk
        this.recordOffset = base + start;
        this.lengthValue = b & 0x7f;
        this.lengthScale = 128;
        this.lengthBytes = 1;
        pos = this.continueLength(chunk, pos);
        if (pos < 0) return;
        length = this.lengthValue;
      }
      this.lengthBytes = 0;
      const bodyStart = pos;
      if (length > this.maxRecordBytes) {
        this.problem = { detail: `record length ${length} exceeds the limit of ${this.maxRecordBytes} bytes`, offset: base + start };
        return;
      }
      if (length <= end - bodyStart) {
        pos = bodyStart + length;
        emit(chunk.subarray(bodyStart, pos), base + start);
        continue;
      }
      // body runs into the next chunk: copy what is here into an owned buffer
      this.recordOffset = base + start;
      this.body = new Uint8Array(length);
      this.body.set(chunk.subarray(bodyStart, end), 0);
      this.bodyFilled = end - bodyStart;
      return;
    }
  }

  /** where feed() goes on after startBody() */
  private afterStart = 0;

  /** After a split length completed at `pos`: checks the length and starts the body. */
  private startBody(chunk: Uint8Array, pos: number, emit: RecordSink): boolean {
    const length = this.lengthValue;
    this.lengthBytes = 0;
    if (length > this.maxRecordBytes) {
      this.problem = { detail: `record length ${length} exceeds the limit of ${this.maxRecordBytes} bytes`, offset: this.recordOffset };
      return false;
    }
    if (length <= chunk.length - pos) {
      emit(chunk.subarray(pos, pos + length), this.recordOffset);
      this.afterStart = pos + length;
      return true;
    }
    this.body = new Uint8Array(length);
    this.body.set(chunk.subarray(pos), 0);
    this.bodyFilled = chunk.length - pos;
    this.afterStart = chunk.length;
    return true;
  }

  /**
   * Continues the length varint held in lengthValue/lengthScale/lengthBytes with bytes from
   * chunk[pos..]. Returns the position after the varint, or -1 when the chunk ended first or
   * the varint is bad (then `problem` is set).
   */
  private continueLength(chunk: Uint8Array, pos: number): number {
    while (pos < chunk.length) {
      const b = chunk[pos++];
      this.lengthValue += (b & 0x7f) * this.lengthScale;
      this.lengthScale *= 128;
      this.lengthBytes++;
      if (b < 0x80) {
        if (this.lengthValue > 0xffffffff) {
          this.problem = { detail: `record length ${this.lengthValue} overflows 32 bits`, offset: this.recordOffset };
          return -1;
        }
        return pos;
      }
      if (this.lengthBytes >= 10) {
        this.problem = { detail: 'bad record length: varint longer than 10 bytes', offset: this.recordOffset };
        return -1;
      }
    }
    return -1;
  }

  /** The bytes of a record cut short so far (null when none is being assembled). */
  partialRecord(): Uint8Array | null {
    return this.body === null ? null : this.body.subarray(0, this.bodyFilled);
  }

  /** At end of input: sets `problem` when a record was left incomplete. */
  finish(): void {
    if (this.problem) return;
    if (this.lengthBytes > 0) {
      this.problem = { detail: 'truncated record: the input ends inside its length varint', offset: this.recordOffset };
    } else if (this.body !== null) {
      this.problem = {
        detail: `truncated record: length ${this.body.length} but only ${this.bodyFilled} bytes follow`,
        offset: this.recordOffset,
      };
    }
  }
}

/** The label used in error texts for an input. */
export function inputLabel(input: string | NodeJS.ReadableStream, fileLabel?: string): string {
  if (fileLabel !== undefined) return fileLabel;
  if (typeof input === 'string') return input === '-' ? '<stdin>' : input;
  return '<stream>';
}

/** Opens a path ('-' is stdin) or passes a stream through. */
export function openInput(input: string | NodeJS.ReadableStream): NodeJS.ReadableStream {
  if (typeof input !== 'string') return input;
  if (input === '-') return process.stdin;
  return createReadStream(input, { highWaterMark: FILE_CHUNK_BYTES });
}

function asBytes(chunk: unknown): Uint8Array {
  if (chunk instanceof Uint8Array) return chunk;
  if (typeof chunk === 'string') return Buffer.from(chunk, 'utf8');
  throw new Error(`stream gave a ${typeof chunk} chunk, expected bytes`);
}

function readErrorDetail(error: unknown): string {
  const e = error as NodeJS.ErrnoException;
  if (e && e.code === 'ENOENT') return 'cannot open: no such file';
  if (e && e.code === 'EISDIR') return 'cannot read: is a directory';
  if (e && e.code === 'EACCES') return 'cannot open: permission denied';
  return `cannot read: ${e && e.message ? e.message : String(error)}`;
}

/**
 * Uncompressed chunks of an input, gzip detected by its magic bytes. Errors of the file or of
 * gzip become InputError; gzip offsets are counted in uncompressed bytes.
 */
export async function* readChunks(input: string | NodeJS.ReadableStream, fileLabel?: string): AsyncGenerator<Uint8Array> {
  const label = inputLabel(input, fileLabel);
  const source = openInput(input);
  try {
    yield* inflateIfGzip(source, label);
  } finally {
    // a consumer that stops early must not leave a file open
    if (typeof input === 'string' && input !== '-') (source as Readable).destroy();
  }
}

async function* inflateIfGzip(source: NodeJS.ReadableStream, label: string): AsyncGenerator<Uint8Array> {
  const iterator = (source as AsyncIterable<unknown>)[Symbol.asyncIterator]();
  let first: Uint8Array | null = null;
  try {
    // peek until two bytes are known (a one-byte first chunk is possible on pipes)
    while (first === null || first.length < 2) {
      const step = await iterator.next();
      if (step.done) break;
      const bytes = asBytes(step.value);
      first = first === null ? bytes : Buffer.concat([first, bytes]);
    }
  } catch (error) {
    throw new InputError(label, readErrorDetail(error));
  }
  if (first === null) return;
  const gzip = first.length >= 2 && first[0] === 0x1f && first[1] === 0x8b;
  if (!gzip) {
    yield first;
    while (true) {
      let step: IteratorResult<unknown>;
      try {
        step = await iterator.next();
      } catch (error) {
        throw new InputError(label, readErrorDetail(error));
      }
      if (step.done) return;
      yield asBytes(step.value);
    }
  }

  // gzip: feed the raw chunks to gunzip; a raw read error is kept apart from a gzip error
  let rawError: unknown = null;
  async function* raw(): AsyncGenerator<Uint8Array> {
    yield first!;
    try {
      while (true) {
        const step = await iterator.next();
        if (step.done) return;
        yield asBytes(step.value);
      }
    } catch (error) {
      rawError = error;
      throw error;
    }
  }
  const gunzip = createGunzip({ chunkSize: 256 * 1024 });
  const compressed = Readable.from(raw());
  compressed.on('error', (error) => gunzip.destroy(error));
  compressed.pipe(gunzip);
  let uncompressed = 0;
  try {
    for await (const chunk of gunzip) {
      uncompressed += (chunk as Uint8Array).length;
      yield chunk as Uint8Array;
    }
  } catch (error) {
    if (rawError !== null) throw new InputError(label, readErrorDetail(rawError));
    const e = error as NodeJS.ErrnoException;
    const detail = e.code === 'Z_BUF_ERROR' || /unexpected end/i.test(e.message)
      ? 'gzip data is truncated (unexpected end of file)'
      : `gzip data is corrupt (${e.message})`;
    throw new InputError(label, `${detail}; offsets count uncompressed bytes`, undefined, uncompressed);
  } finally {
    compressed.destroy();
    gunzip.destroy();
  }
}

/** Records of a delimited file, in order; see the API note at the top of this file. */
export async function* readRecords(input: string | NodeJS.ReadableStream, options: ReadRecordsOptions = {}): AsyncGenerator<RawRecord> {
  const label = inputLabel(input, options.fileLabel);
  yield* framedRecords(readChunks(input, label), label, options.maxRecordBytes);
}

/** Records framed from uncompressed chunks (readChunks output); errors name `label`. */
export async function* framedRecords(
  chunks: AsyncIterable<Uint8Array>,
  label: string,
  maxRecordBytes = DEFAULT_MAX_RECORD_BYTES,
): AsyncGenerator<RawRecord> {
  const framer = new RecordFramer(maxRecordBytes);
  const batch: RawRecord[] = [];
  let last: Uint8Array | null = null; // the last whole record, kept by reference to name its event on an error
  const collect: RecordSink = (bytes, offset) => { batch.push({ bytes, offset }); last = bytes; };
  for await (const chunk of chunks) {
    framer.feed(chunk, collect);
    for (let k = 0; k < batch.length; k++) yield batch[k];
    batch.length = 0;
    if (framer.problem) break;
  }
  framer.finish();
  if (framer.problem) {
    const partial = framer.partialRecord();
    const event = partial === null ? null : leadingEventNumber(partial);
    if (event !== null) throw new InputError(label, framer.problem.detail, event, framer.problem.offset);
    const before = last === null ? null : leadingEventNumber(last);
    const detail = before === null ? framer.problem.detail : `${framer.problem.detail} (the record after event ${before})`;
    throw new InputError(label, detail, undefined, framer.problem.offset);
  }
}

/**
 * The event number of a record (field 1, a varint), read from as many of its bytes as there
 * are; null when field 1 is not among them or is not a varint (the header record). Other
 * fields before it are stepped over by their wire type.
 */
export function leadingEventNumber(bytes: Uint8Array): number | null {
  let pos = 0;
  const varint = (): number | null => {
    let value = 0;
    let scale = 1;
    for (let k = 0; k < 10 && pos < bytes.length; k++) {
      const b = bytes[pos++];
      value += (b & 0x7f) * scale;
      if (b < 0x80) return value;
      scale *= 128;
    }
    return null;
  };
  while (pos < bytes.length) {
    const tag = varint();
    if (tag === null) return null;
    const field = Math.floor(tag / 8);
    const wire = tag % 8;
    if (field === 1) {
      if (wire !== 0) return null;
      const value = varint();
      return value !== null && Number.isSafeInteger(value) ? value : null;
    }
    if (wire === 0) { if (varint() === null) return null; } else if (wire === 1) pos += 8;
    else if (wire === 5) pos += 4;
    else if (wire === 2) { const length = varint(); if (length === null) return null; pos += length; } else return null;
  }
  return null;
}
