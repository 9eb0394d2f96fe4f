// The bytes of an input: a path ('-' is stdin) or a stream, gzip detected by content and
// inflated on the fly; file and gzip errors become InputError (record-reader.ts has the API).
//
// Caps on inflating, so that a small hostile gzip file (a "bomb": gigabytes of zeros in a few
// kilobytes) cannot keep a command busy for hours: the total of inflated bytes (default
// 64 GiB, raised by the commands' --max-inflated-bytes), and the ratio of inflated to
// compressed bytes (default 100; real event files compress about 1:1, CSV about 3:1, and
// deflate itself cannot pass about 1032:1), judged only past 64 MiB so that a small file of
// repetitive text is never refused. Either ends the input with one line naming the byte
// offset in the compressed stream, where the input was given up.

import { createReadStream } from 'node:fs';
import { createGunzip } from 'node:zlib';
import { Readable } from 'node:stream';
import { InputError } from '../errors.js';

/** read size for files: large enough that most records lie inside one chunk */
const FILE_CHUNK_BYTES = 1 << 20;

export const DEFAULT_MAX_INFLATED_BYTES = 64 * 2 ** 30;
export const DEFAULT_MAX_INFLATE_RATIO = 100;
/** inflated bytes below which the ratio is not judged */
export const DEFAULT_INFLATE_RATIO_FLOOR_BYTES = 64 * 2 ** 20;

export interface InflateLimits {
  /** most bytes a gzip input may inflate to (default DEFAULT_MAX_INFLATED_BYTES) */
  maxInflatedBytes?: number;
  /** most inflated bytes per compressed byte (default DEFAULT_MAX_INFLATE_RATIO) */
  maxInflateRatio?: number;
  /** inflated bytes before the ratio is judged (default DEFAULT_INFLATE_RATIO_FLOOR_BYTES) */
  ratioFloorBytes?: number;
}

/** The label used in error texts for an input. */
export function inputLabel(input: string | NodeJS.ReadableStream | AsyncIterable<Uint8Array>, fileLabel?: string): string {
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
export async function* readChunks(input: string | NodeJS.ReadableStream, fileLabel?: string, limits: InflateLimits = {}): AsyncGenerator<Uint8Array> {
  const label = inputLabel(input, fileLabel);
  const source = openInput(input);
  try {
    yield* inflateIfGzip(source, label, limits);
  } finally {
    // a consumer that stops early must not leave a file open
    if (typeof input === 'string' && input !== '-') (source as Readable).destroy();
  }
}

async function* inflateIfGzip(source: NodeJS.ReadableStream, label: string, limits: InflateLimits): AsyncGenerator<Uint8Array> {
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
  const maxInflated = limits.maxInflatedBytes ?? DEFAULT_MAX_INFLATED_BYTES;
  const maxRatio = limits.maxInflateRatio ?? DEFAULT_MAX_INFLATE_RATIO;
  const ratioFloor = limits.ratioFloorBytes ?? DEFAULT_INFLATE_RATIO_FLOOR_BYTES;
  let uncompressed = 0;
  try {
    for await (const chunk of gunzip) {
      uncompressed += (chunk as Uint8Array).length;
      // bytesWritten: compressed bytes taken in by the inflater so far
      const compressedBytes = gunzip.bytesWritten;
      if (uncompressed > maxInflated) {
        throw new CapError(`gzip stream inflates to more than ${maxInflated} bytes, the cap on inflated bytes (--max-inflated-bytes raises it); byte counts the compressed stream`, compressedBytes);
      }
      if (uncompressed > ratioFloor && uncompressed > maxRatio * compressedBytes) {
        throw new CapError(`gzip stream inflates ${Math.floor(uncompressed / Math.max(1, compressedBytes))} times its compressed size, more than the cap of ${maxRatio} (--max-inflate-ratio raises it); byte counts the compressed stream`, compressedBytes);
      }
      yield chunk as Uint8Array;
    }
  } catch (error) {
    if (error instanceof CapError) throw new InputError(label, error.message, undefined, error.compressedOffset);
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

/** a cap on inflating reached: kept apart from gzip's own errors in the catch above */
class CapError extends Error {
  constructor(message: string, readonly compressedOffset: number) {
    super(message);
  }
}
