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
//   readChunks(input, label?, inflate?) (input-chunks.ts): the uncompressed chunks of an input (gzip by
//     content), with caps on the inflated total and ratio.
//   RecordFramer (record-framer.ts): the synchronous core (feed chunks, get records through a callback), for
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

import { InputError } from '../errors.js';
import { inputLabel, readChunks, type InflateLimits } from './input-chunks.js';
import { DEFAULT_MAX_RECORD_BYTES, RecordFramer, type RecordSink } from './record-framer.js';

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
  /** caps on inflating a gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
}

/** Records of a delimited file, in order; see the API note at the top of this file. */
export async function* readRecords(input: string | NodeJS.ReadableStream, options: ReadRecordsOptions = {}): AsyncGenerator<RawRecord> {
  const label = inputLabel(input, options.fileLabel);
  yield* framedRecords(readChunks(input, label, options.inflate), label, options.maxRecordBytes);
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
