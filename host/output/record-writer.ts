// Writing delimited record files (proto/jetlag.proto) safely: to a temporary name next to
// the target, renamed into place by close(), so a reader never sees a half-written file
// under the final name. '-' writes to stdout (no temporary). Optional gzip. Small records
// are gathered into 256 KiB blocks; a block write that the stream refuses (backpressure)
// is awaited until 'drain'.
//
// API
//   OutputFile.open(path, { gzip?, stdout? }): bytes, temporary name, rename on close()
//   TextFileWriter.open(path, options): .write(text), .close(), .abort() (CSV, JSON lines)
//   RecordFileWriter.open(path, { gzip?, stdout? }): Promise<RecordFileWriter>
//     .write(message): Promise<void> | undefined   appends varint length + message; await
//                                                   the promise when one is returned
//     .close(): Promise<void>                       flushes, ends, renames into place
//     .abort(): Promise<void>                       drops the temporary file
//     .records, .bytes                              counts written so far (uncompressed)
//   EventFileWriter.open(path, header, options)    header record first, then writeEvent()
//   (jets files: jets-writer.ts JetsFileWriter)

import { once } from 'node:events';
import { createWriteStream } from 'node:fs';
import { rename, unlink } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { createGzip } from 'node:zlib';
import { encodeEventRecord, type EventRecordFields } from '../formats/event-codec.js';
import { encodeFileHeader, type FileHeader } from '../formats/file-header.js';
import { ProtoWriter } from '../formats/wire.js';

const BLOCK_BYTES = 256 * 1024;

export interface WriterOptions {
  gzip?: boolean;
  /** the stream '-' stands for (default process.stdout) */
  stdout?: NodeJS.WritableStream;
}

/** One line naming the output that cannot be written; keeps the system's error code. */
function cannotWrite(path: string, error: NodeJS.ErrnoException): Error {
  const reason = error.code === 'ENOENT' ? 'no such directory'
    : error.code === 'EISDIR' ? 'it is a directory'
    : error.code === 'EACCES' ? 'permission denied'
    : error.message;
  const code = error.code && reason !== error.message ? ` (${error.code})` : '';
  return Object.assign(new Error(`cannot write ${path}: ${reason}${code}`), { code: error.code });
}

/**
 * An output file written under a temporary name and renamed into place by close(); '-' is
 * stdout. write() returns a promise when the stream asks to wait (backpressure).
 */
export class OutputFile {
  private failure: Error | null = null;
  private closed = false;

  private constructor(
    private readonly sink: NodeJS.WritableStream,
    private readonly file: NodeJS.WritableStream | null,
    private readonly tempPath: string | null,
    private readonly finalPath: string | null,
    private readonly stdoutTarget: NodeJS.WritableStream | null = null,
  ) {
    const remember = (error: Error) => { this.failure ??= error; };
    sink.on('error', remember);
    if (file && file !== sink) file.on('error', remember);
  }

  static async open(path: string, options: WriterOptions = {}): Promise<OutputFile> {
    if (path === '-') {
      const stdout = options.stdout ?? process.stdout;
      if (!options.gzip) return new OutputFile(stdout, null, null, null, stdout);
      const gzip = createGzip();
      gzip.pipe(stdout as NodeJS.WritableStream, { end: false });
      return new OutputFile(gzip, null, null, null, stdout);
    }
    const tempPath = join(dirname(path), `.${basename(path)}.${process.pid}.${Math.random().toString(36).slice(2, 8)}.tmp`);
    const file = createWriteStream(tempPath);
    await new Promise<void>((resolve, reject) => {
      file.once('open', () => resolve());
      file.once('error', (error) => reject(cannotWrite(path, error)));
    });
    if (!options.gzip) return new OutputFile(file, file, tempPath, path);
    const gzip = createGzip();
    gzip.pipe(file);
    return new OutputFile(gzip, file, tempPath, path);
  }

  /** The stream keeps `bytes` until written: do not reuse them. */
  write(bytes: Uint8Array): Promise<void> | undefined {
    if (this.failure) return Promise.reject(this.failure);
    if (this.sink.write(bytes)) return undefined;
    return this.waitDrain();
  }

  private async waitDrain(): Promise<void> {
    if (this.failure) throw this.failure;
    await new Promise<void>((resolve, reject) => {
      const onDrain = () => { cleanup(); resolve(); };
      const onError = (error: Error) => { cleanup(); reject(error); };
      const cleanup = () => { this.sink.off('drain', onDrain); this.sink.off('error', onError); };
      this.sink.on('drain', onDrain);
      this.sink.on('error', onError);
    });
  }

  /** Ends the output and renames the temporary file into place (stdout is left open). */
  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    if (this.failure) { await this.dropTemp(); throw this.failure; }
    if (this.finalPath === null) {
      if (this.sink !== this.stdoutTarget) {
        // gzip to stdout: end the gzip stream (never stdout itself) and let it drain into stdout
        const ended = once(this.sink, 'end');
        this.sink.end();
        await ended;
      }
      return;
    }
    const done = once(this.file!, 'close');
    this.sink.end();
    await done;
    if (this.failure) { await this.dropTemp(); throw this.failure; }
    try {
      await rename(this.tempPath!, this.finalPath!);
    } catch (error) {
      // e.g. the target is a directory: the temporary file must not stay behind
      await this.dropTemp();
      throw cannotWrite(this.finalPath!, error as NodeJS.ErrnoException);
    }
  }

  /** Drops the temporary file (stdout: nothing to undo). */
  async abort(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    if (this.finalPath === null) return;
    (this.sink as NodeJS.WritableStream & { destroy(): void }).destroy();
    if (this.file !== this.sink) (this.file as NodeJS.WritableStream & { destroy(): void }).destroy();
    await this.dropTemp();
  }

  private async dropTemp(): Promise<void> {
    if (this.tempPath) await unlink(this.tempPath).catch(() => undefined);
  }
}

/** Delimited records onto an OutputFile, gathered into blocks. */
export class RecordFileWriter {
  records = 0;
  bytes = 0;
  private block = new Uint8Array(BLOCK_BYTES);
  private fill = 0;

  private constructor(private readonly output: OutputFile) {}

  static async open(path: string, options: WriterOptions = {}): Promise<RecordFileWriter> {
    return new RecordFileWriter(await OutputFile.open(path, options));
  }

  /** Appends one record. Returns a promise (await it) when the output asked to wait. */
  write(message: Uint8Array): Promise<void> | undefined {
    const need = 10 + message.length;
    let pending: Promise<void> | undefined;
    if (this.fill + need > this.block.length) pending = this.flush();
    if (need > this.block.length) {
      // a record larger than a block goes out on its own
      const framed = new Uint8Array(need);
      const start = writeVarint(framed, 0, message.length);
      framed.set(message, start);
      const done = this.output.write(framed.subarray(0, start + message.length));
      pending = pending ? pending.then(() => done) : done;
    } else {
      this.fill = writeVarint(this.block, this.fill, message.length);
      this.block.set(message, this.fill);
      this.fill += message.length;
    }
    this.records++;
    this.bytes += message.length + varintLength(message.length);
    return pending;
  }

  private flush(): Promise<void> | undefined {
    if (this.fill === 0) return undefined;
    const out = this.block.subarray(0, this.fill);
    this.block = new Uint8Array(BLOCK_BYTES); // the stream keeps `out` until written
    this.fill = 0;
    return this.output.write(out);
  }

  /** Writes what is left, ends the output and renames the temporary file into place. */
  async close(): Promise<void> {
    await this.flush();
    await this.output.close();
  }

  abort(): Promise<void> {
    return this.output.abort();
  }
}

/** Lines of text onto an OutputFile, gathered into blocks of about 64 KiB. */
export class TextFileWriter {
  private parts: string[] = [];
  private size = 0;

  private constructor(private readonly output: OutputFile) {}

  static async open(path: string, options: WriterOptions = {}): Promise<TextFileWriter> {
    return new TextFileWriter(await OutputFile.open(path, options));
  }

  /** Appends text (include the newline). Returns a promise (await it) when the output asked to wait. */
  write(text: string): Promise<void> | undefined {
    this.parts.push(text);
    this.size += text.length;
    return this.size >= 65536 ? this.flush() : undefined;
  }

  private flush(): Promise<void> | undefined {
    if (this.parts.length === 0) return undefined;
    const bytes = Buffer.from(this.parts.join(''), 'utf8');
    this.parts = [];
    this.size = 0;
    return this.output.write(bytes);
  }

  async close(): Promise<void> {
    await this.flush();
    await this.output.close();
  }

  abort(): Promise<void> {
    return this.output.abort();
  }
}

function varintLength(value: number): number {
  let n = 1;
  while (value >= 128) { value = Math.floor(value / 128); n++; }
  return n;
}

function writeVarint(out: Uint8Array, pos: number, value: number): number {
  while (value >= 128) { out[pos++] = (value % 128) | 0x80; value = Math.floor(value / 128); }
  out[pos++] = value;
  return pos;
}

/** An event file: the header record, then one event record per writeEvent(). */
export class EventFileWriter {
  private readonly encoder = new ProtoWriter(4096);
  private constructor(readonly records: RecordFileWriter, readonly header: FileHeader) {}

  static async open(path: string, header: Omit<FileHeader, 'kind' | 'formatVersion'>, options: WriterOptions = {}): Promise<EventFileWriter> {
    const full: FileHeader = { ...header, kind: 'events', formatVersion: 1 };
    const headerBytes = encodeFileHeader(full); // fails on a bad grid before any file is made
    const records = await RecordFileWriter.open(path, options);
    await records.write(headerBytes);
    return new EventFileWriter(records, full);
  }

  writeEvent(fields: EventRecordFields): Promise<void> | undefined {
    return this.records.write(encodeEventRecord(fields, this.encoder));
  }

  close(): Promise<void> {
    return this.records.close();
  }

  abort(): Promise<void> {
    return this.records.abort();
  }
}

/** A whole small text file (a JSON summary): temporary name, renamed when complete; '-' is stdout. */
export async function writeTextFile(path: string, text: string, options: WriterOptions = {}): Promise<void> {
  const file = await OutputFile.open(path, options);
  try {
    const pending = file.write(Buffer.from(text, 'utf8'));
    if (pending) await pending;
    await file.close();
  } catch (error) {
    await file.abort();
    throw error;
  }
}
