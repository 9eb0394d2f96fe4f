// Writing an output file safely (optional gzip): to a temporary name next to
// the target, put into place by close(), so a reader never sees a half-written file under the
// final name. An existing file is refused unless `force` (--force); a character device
// (/dev/null) or a pipe is written directly, never replaced (output-target.ts); '-' writes to
// stdout (no temporary); temporaries go when the process is stopped (temporaries.ts).
//
// API
//   OutputFile.open(path, { gzip?, stdout?, force? }): bytes, temporary name, in place on close()
//   writeTextFile(path, text, options): a whole small text file the same way
//   (records: record-writer.ts; lines of text: text-file-writer.ts)

import { once } from 'node:events';
import { createWriteStream } from 'node:fs';
import { link, lstat, rename, unlink } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { createGzip } from 'node:zlib';
import { OutputError } from '../errors.js';
import { cannotWrite, examineOutput } from './output-target.js';
import { holdTemporary, releaseTemporary } from './temporaries.js';

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
