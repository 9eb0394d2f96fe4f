// Writing delimited record files (proto/jetlag.proto) safely: to a temporary name next to
// the target, put into place by close(), so a reader never sees a half-written file under the
// final name. An existing file is refused unless `force` (--force); a character device
// (/dev/null) or a pipe is written directly, never replaced (output-target.ts); '-' writes to
// stdout (no temporary); temporaries go when the process is stopped (temporaries.ts).
// Optional gzip. Small records are gathered into 256 KiB blocks; a block write that the
// stream refuses (backpressure) is awaited until 'drain'.
//
// API
//   OutputFile.open(path, { gzip?, stdout?, force? }): bytes, temporary name, in place on close()
//   TextFileWriter.open(path, options): .write(text), .close(), .abort() (CSV, JSON lines)
//   RecordFileWriter.open(path, { gzip?, stdout?, force? }): Promise<RecordFileWriter>
//     .write(message): Promise<void> | undefined   appends varint length + message; await
//                                                   the promise when one is returned
//     .close(): Promise<void>                       flushes, ends, puts the file in place
//     .abort(): Promise<void>                       drops the temporary file
//     .records, .bytes                              counts written so far (uncompressed)
//   EventFileWriter.open(path, header, options)    header record first, then writeEvent()
//   (jets files: jets-writer.ts JetsFileWriter)

import { once } from 'node:events';
import { createWriteStream } from 'node:fs';
import { link, lstat, rename, unlink } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { createGzip } from 'node:zlib';
import { encodeEventRecord, type EventRecordFields } from '../formats/event-codec.js';
import { encodeFileHeader, type FileHeader } from '../formats/file-header.js';
import { ProtoWriter } from '../formats/wire.js';
import { OutputError } from '../errors.js';
import { cannotWrite, examineOutput } from './output-target.js';
import { holdTemporary, releaseTemporary } from './temporaries.js';

const BLOCK_BYTES = 256 * 1024;

export interface WriterOptions {
  gzip?: boolean;
  /** the stream '-' stands for (default process.stdout) */
  stdout?: NodeJS.WritableStream;
  /** replace an existing regular file (--force); without it an existing file is refused */
  force?: boolean;
}

/**
 * An output file: a regular file is written under a temporary name and put into place by
 * close(); a character device or a pipe is written directly; '-' is stdout. write() returns
 * a promise when the stream asks to wait (backpressure).
 */
export class OutputFile {
  private failure: Error | null = null;
  private closed = false;

  private constructor(
    private readonly sink: NodeJS.WritableStream,
    /** the file stream under the sink (null for stdout) */
    private readonly file: NodeJS.WritableStream | null,
    private readonly tempPath: string | null,
    private readonly finalPath: string,
    /** how close() puts the output in place: 'link' never replaces a file, 'rename' does */
    private readonly placing: 'link' | 'rename' | 'direct' | 'stdout',
    private readonly stdoutTarget: NodeJS.WritableStream | null = null,
  ) {
    const remember = (error: Error) => { this.failure ??= error; };
    sink.on('error', remember);
    if (file && file !== sink) file.on('error', remember);
  }

  static async open(path: string, options: WriterOptions = {}): Promise<OutputFile> {
    if (path === '-') {
      const stdout = options.stdout ?? process.stdout;
      if (!options.gzip) return new OutputFile(stdout, null, null, path, 'stdout', stdout);
      const gzip = createGzip();
      gzip.pipe(stdout as NodeJS.WritableStream, { end: false });
      return new OutputFile(gzip, null, null, path, 'stdout', stdout);
    }
    const target = await examineOutput(path, { force: options.force });
    let file: NodeJS.WritableStream;
    let tempPath: string | null = null;
    if (target.kind === 'direct') {
      file = target.handle.createWriteStream();
    } else {
      tempPath = join(dirname(path), `.${basename(path)}.${process.pid}.${Math.random().toString(36).slice(2, 8)}.tmp`);
      // wx: a name that is somehow taken is never written over
      const stream = createWriteStream(tempPath, { flags: 'wx' });
      await new Promise<void>((resolve, reject) => {
        stream.once('open', () => resolve());
        stream.once('error', (error) => reject(cannotWrite(path, error)));
      });
      holdTemporary(tempPath);
      file = stream;
    }
    const placing = target.kind === 'direct' ? 'direct' : target.kind === 'replace' ? 'rename' : 'link';
    if (!options.gzip) return new OutputFile(file, file, tempPath, path, placing);
    const gzip = createGzip();
    gzip.pipe(file);
    return new OutputFile(gzip, file, tempPath, path, placing);
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

  /** Ends the output and puts the temporary file into place (stdout is left open). */
  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    if (this.failure) { await this.dropTemp(); throw this.failure; }
    if (this.placing === 'stdout') {
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
    if (this.placing === 'direct') return;
    try {
      await placeFile(this.tempPath!, this.finalPath, this.placing);
    } catch (error) {
      // e.g. the target is a directory now: the temporary file must not stay behind
      await this.dropTemp();
      throw error instanceof OutputError ? error : cannotWrite(this.finalPath, error as NodeJS.ErrnoException);
    }
    releaseTemporary(this.tempPath!);
  }

  /** Drops the temporary file (stdout: nothing to undo; a device or a pipe: the stream ends). */
  async abort(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    if (this.placing === 'stdout') return;
    (this.sink as NodeJS.WritableStream & { destroy(): void }).destroy();
    if (this.file !== this.sink) (this.file as NodeJS.WritableStream & { destroy(): void }).destroy();
    await this.dropTemp();
  }

  private async dropTemp(): Promise<void> {
    if (!this.tempPath) return;
    await unlink(this.tempPath).catch(() => undefined);
    releaseTemporary(this.tempPath);
  }
}

/**
 * Puts a finished temporary file in place. Without --force a hard link makes the name only if
 * it is still free (a file that appeared during the run is not replaced), then the temporary
 * name goes; a file system without hard links falls back to a look and a rename.
 */
async function placeFile(tempPath: string, finalPath: string, placing: 'link' | 'rename'): Promise<void> {
  if (placing === 'rename') { await rename(tempPath, finalPath); return; }
  try {
    await link(tempPath, finalPath);
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    if (code === 'EEXIST') throw appeared(finalPath);
    if (code !== 'EPERM' && code !== 'ENOTSUP' && code !== 'EOPNOTSUPP' && code !== 'EXDEV') throw error;
    if (await lstat(finalPath).then(() => true, () => false)) throw appeared(finalPath);
    await rename(tempPath, finalPath);
    return;
  }
  await unlink(tempPath);
}

function appeared(path: string): OutputError {
  return new OutputError(path, 'a file of that name appeared while it was being written (give --force to replace it)', 'EEXIST');
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
