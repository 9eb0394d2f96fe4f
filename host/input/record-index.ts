// Record index of a plain event file, so that a shard (`run --shard k/n`) reads only its own
// batches instead of framing the whole file. Written once by `jetlag index FILE` beside the file.
//
// Layout of FILE.index (names of our own):
//   one line of JSON: {"format":"jetlag-record-index","version":1,"fileBytes":B,"records":R,
//                      "firstRecordOffset":F,"fingerprint":"<sha-256 hex>"}
//   then R little-endian uint32: the byte length of each event record as stored (length varint
//   and body), in file order. Record k starts at F plus the lengths of records 0..k-1.
// The fingerprint hashes the file's first and last 64 KiB and its size: cheap to recompute on
// every run, and enough to tell a replaced or rewritten file from the one indexed (a file that
// only changed in its middle with the same size is not caught; rerun `jetlag index` after any
// rewrite). gzip files are not indexed: inflating cannot start in the middle of a stream.

import { createHash } from 'node:crypto';
import { closeSync, openSync, readFileSync, readSync, statSync } from 'node:fs';
import { InputError } from '../errors.js';
import { openRecordFile } from './event-source.js';

export const INDEX_FORMAT = 'jetlag-record-index';
export const INDEX_VERSION = 1;
const FINGERPRINT_SPAN_BYTES = 64 * 1024;

export interface RecordIndex {
  records: number;
  /** offsets[k] is where record k starts; offsets[records] is the end of the last record */
  offsets: Float64Array;
}

/** Where the index of `file` lives. */
export function indexPathOf(file: string): string {
  return `${file}.index`;
}

export function isGzipPath(path: string): boolean {
  const fd = openSync(path, 'r');
  try {
    const magic = Buffer.alloc(2);
    return readSync(fd, magic, 0, 2, 0) === 2 && magic[0] === 0x1f && magic[1] === 0x8b;
  } finally {
    closeSync(fd);
  }
}

function fingerprintOf(path: string, fileBytes: number): string {
  const hash = createHash('sha256');
  hash.update(String(fileBytes));
  const fd = openSync(path, 'r');
  try {
    const span = Math.min(FINGERPRINT_SPAN_BYTES, fileBytes);
    const buffer = Buffer.alloc(span);
    hash.update(buffer.subarray(0, readSync(fd, buffer, 0, span, 0)));
    hash.update(buffer.subarray(0, readSync(fd, buffer, 0, span, Math.max(0, fileBytes - span))));
  } finally {
    closeSync(fd);
  }
  return hash.digest('hex');
}

/** Frames the whole file once and returns the index file's bytes; throws InputError on a bad file. */
export async function buildRecordIndex(path: string): Promise<{ bytes: Buffer; records: number }> {
  if (isGzipPath(path)) {
    throw new InputError(path, 'gzip-compressed: an index needs a plain file (decompress it once, gunzip -k, and index that)');
  }
  const fileBytes = statSync(path).size;
  const source = await openRecordFile(path);
  if (source.format !== 'events-file') {
    await source.records.return(undefined);
    throw new InputError(path, `${source.format === 'csv' ? 'a CSV tower file' : 'a jets file'}: only event files are indexed`);
  }
  let lengths = new Uint32Array(1024);
  let records = 0;
  let firstRecordOffset = -1;
  let previousOffset = -1;
  for await (const record of source.records) {
    if (firstRecordOffset < 0) firstRecordOffset = record.offset;
    else lengths[records - 1] = record.offset - previousOffset;
    if (records === lengths.length) {
      const grown = new Uint32Array(lengths.length * 2);
      grown.set(lengths);
      lengths = grown;
    }
    previousOffset = record.offset;
    records++;
  }
  if (records > 0) lengths[records - 1] = fileBytes - previousOffset;
  else firstRecordOffset = fileBytes;
  const head = { format: INDEX_FORMAT, version: INDEX_VERSION, fileBytes, records, firstRecordOffset, fingerprint: fingerprintOf(path, fileBytes) };
  const body = Buffer.alloc(records * 4);
  for (let k = 0; k < records; k++) body.writeUInt32LE(lengths[k], 4 * k);
  return { bytes: Buffer.concat([Buffer.from(JSON.stringify(head) + '\n'), body]), records };
}

/**
 * Reads the index of `file` (null when there is none) and checks it still describes the file;
 * an index of another file is refused in one line naming it.
 */
export function readRecordIndex(file: string, indexPath = indexPathOf(file)): RecordIndex | null {
  let bytes: Buffer;
  try {
    bytes = readFileSync(indexPath);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw new InputError(indexPath, `cannot read (${(error as NodeJS.ErrnoException).code ?? 'error'})`);
  }
  const newline = bytes.indexOf(0x0a);
  let head: { format?: unknown; version?: unknown; fileBytes?: unknown; records?: unknown; firstRecordOffset?: unknown; fingerprint?: unknown };
  try {
    head = JSON.parse(bytes.subarray(0, newline < 0 ? 0 : newline).toString('utf8'));
  } catch {
    throw new InputError(indexPath, `not a jetlag record index (make it again: jetlag index ${file})`, undefined, 0);
  }
  if (head?.format !== INDEX_FORMAT || head.version !== INDEX_VERSION) {
    throw new InputError(indexPath, `not a jetlag record index of version ${INDEX_VERSION} (make it again: jetlag index ${file})`, undefined, 0);
  }
  const { fileBytes, records, firstRecordOffset } = head;
  if (!Number.isSafeInteger(fileBytes) || !Number.isSafeInteger(records) || !Number.isSafeInteger(firstRecordOffset)) {
    throw new InputError(indexPath, 'fields fileBytes, records and firstRecordOffset must be whole numbers', undefined, 0);
  }
  const size = statSync(file).size;
  if (size !== fileBytes || fingerprintOf(file, size) !== head.fingerprint) {
    throw new InputError(indexPath, `does not describe ${file} as it is now (indexed ${fileBytes} bytes, the file has ${size}): make it again with jetlag index ${file}`);
  }
  const count = records as number;
  if (bytes.length - newline - 1 !== count * 4) {
    throw new InputError(indexPath, `holds ${bytes.length - newline - 1} bytes of record lengths, ${count * 4} expected for ${count} records`, undefined, newline + 1);
  }
  const offsets = new Float64Array(count + 1);
  offsets[0] = firstRecordOffset as number;
  for (let k = 0; k < count; k++) offsets[k + 1] = offsets[k] + bytes.readUInt32LE(newline + 1 + 4 * k);
  if (offsets[count] !== size) {
    throw new InputError(indexPath, `record lengths add up to byte ${offsets[count]}, the file ends at ${size}: make it again with jetlag index ${file}`);
  }
  return { records: count, offsets };
}
