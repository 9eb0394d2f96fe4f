// Opening any input of events: our event files and CSV tower files, told apart by content
// (gzip either way), so that every command takes both.
//
// API
//   openEventSource(input, { grid?, maxRecordBytes?, fileLabel? }): Promise<EventSource>
//     input: a path ('-' is stdin) or a readable stream.
//     -> { label, format: 'events-file' | 'csv', header, records }
//     records: AsyncGenerator<{ bytes, offset }>, one event record (EventRecord message bytes)
//     per event, after the header. For an events file these are the file's own records
//     (offset: of the record's length varint). For CSV every event is converted into an
//     event record, so downstream code is uniform (offset: of the event's first row, or for
//     an invalid event of the offending row, whose record then carries the error text).
//     grid: the grid of a CSV file that states none (default: the spec's default grid); a CSV
//     that states its grid (a `# grid` line, csv-grid.ts) is read on that grid, and a grid
//     given that is not the default and differs from it is an error; an events file carries
//     its own grid in its header and `grid` is ignored for it.
//     maxEventGap: CSV only, the largest jump of event numbers (csv-towers.ts).
//     inflate: caps on inflating a gzip input (input-chunks.ts InflateLimits).
//     The error text of an invalid CSV event names the line of the offending row.
//     Unreadable input (bad header, framing error, unreadable CSV line) throws InputError
//     naming file and byte offset: when opening, or from `records` after every record before
//     the problem.
//   openRecordFile(input, options): the same, but also takes jets files (format 'jets-file',
//     records are JetsRecord bytes); for tools that read any jetlag file (export).
//   detectFormat(prefix): 'records' | 'csv' | 'empty', the content test.
//
// Content test: an events or jets file starts with the header record: its length varint,
// then field 1 (signature) "jetlag": bytes 0a 06 6a 65 74 6c 61 67. Anything else that
// looks like text is CSV (whose own reader then demands the header line); other bytes are
// read as records, so the header check names what is wrong.

import { InputError } from '../errors.js';
import type { CsvReadLimits } from './csv-event-builder.js';
import { csvEventsFromChunks } from './csv-towers.js';
import { openCsvGrid } from './csv-grid.js';
import { encodeEventRecord } from '../formats/event-codec.js';
import { decodeFileHeader, FORMAT_VERSION, type FileHeader } from '../formats/file-header.js';
import { framedRecords, type RawRecord } from './record-reader.js';
import { inputLabel, readChunks, type InflateLimits } from './input-chunks.js';
import { DEFAULT_GRID, type Grid } from '../types.js';
import { ProtoWriter } from '../formats/wire.js';

export type SourceFormat = 'events-file' | 'jets-file' | 'csv';

export interface RecordSource {
  label: string;
  format: SourceFormat;
  header: FileHeader;
  records: AsyncGenerator<RawRecord>;
}

export interface EventSource extends RecordSource {
  format: 'events-file' | 'csv';
}

export interface OpenOptions {
  grid?: Grid;
  maxEventGap?: number;
  maxRecordBytes?: number;
  fileLabel?: string;
  /** caps on inflating a gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
}

/** producer text of the header made up for a CSV input */
export const CSV_PRODUCER = 'CSV tower file';

const SIGNATURE_FIELD = [0x0a, 0x06, 0x6a, 0x65, 0x74, 0x6c, 0x61, 0x67]; // field 1, length 6, "jetlag"
const PREFIX_BYTES = 16;

export function detectFormat(prefix: Uint8Array): 'records' | 'csv' | 'empty' {
  if (prefix.length === 0) return 'empty';
  let pos = 0;
  while (pos < prefix.length && pos < 5 && prefix[pos] >= 0x80) pos++;
  pos++;
  if (SIGNATURE_FIELD.every((b, k) => prefix[pos + k] === b)) return 'records';
  for (let k = 0; k < prefix.length; k++) {
    const b = prefix[k];
    // text: printable ASCII, tab, CR, LF, or UTF-8 (a byte order mark, non-ASCII field text)
    if (b < 0x20 && b !== 0x09 && b !== 0x0a && b !== 0x0d) return 'records';
    if (b === 0x7f) return 'records';
  }
  return 'csv';
}

/** The header record of a record file, then the records after it. */
export async function readFileHeader(
  chunks: AsyncIterable<Uint8Array>,
  label: string,
  maxRecordBytes?: number,
): Promise<{ header: FileHeader; records: AsyncGenerator<RawRecord> }> {
  const records = framedRecords(chunks, label, maxRecordBytes);
  const first = await records.next();
  if (first.done) throw new InputError(label, 'no header record', undefined, 0);
  try {
    return { header: decodeFileHeader(first.value.bytes), records };
  } catch (error) {
    await records.return(undefined);
    throw new InputError(label, `bad file header: ${(error as Error).message}`, undefined, first.value.offset);
  }
}

export interface PeekedInput {
  /** the first bytes (up to 16), for telling formats apart */
  prefix: Uint8Array;
  kind: 'records' | 'csv' | 'empty';
  /** every chunk of the input, the peeked ones included; closes the source when abandoned */
  chunks: AsyncGenerator<Uint8Array>;
}

/**
 * Opens an input and reads just enough to tell what it holds (detectFormat), without losing
 * the bytes read: the chunks come back whole. An empty input is closed here.
 */
export async function peekInput(input: string | NodeJS.ReadableStream, label: string, inflate?: InflateLimits): Promise<PeekedInput> {
  const source = readChunks(input, label, inflate);
  const peeked: Uint8Array[] = [];
  let peekedBytes = 0;
  try {
    while (peekedBytes < PREFIX_BYTES) {
      const step = await source.next();
      if (step.done) break;
      peeked.push(step.value);
      peekedBytes += step.value.length;
    }
  } catch (error) {
    await source.return(undefined);
    throw error;
  }
  const prefix = (peeked.length === 1 ? peeked[0] : Buffer.concat(peeked)).subarray(0, PREFIX_BYTES);
  const kind = detectFormat(prefix);
  if (kind === 'empty') await source.return(undefined);
  return { prefix, kind, chunks: rejoin(peeked, source) };
}

/** The chunks again: the peeked prefix, then the rest; closes the source when abandoned. */
async function* rejoin(peeked: Uint8Array[], rest: AsyncGenerator<Uint8Array>): AsyncGenerator<Uint8Array> {
  try {
    for (const chunk of peeked) yield chunk;
    while (true) {
      const step = await rest.next();
      if (step.done) return;
      yield step.value;
    }
  } finally {
    await rest.return(undefined);
  }
}

async function* csvRecords(chunks: AsyncGenerator<Uint8Array>, grid: Grid, label: string, limits: CsvReadLimits): AsyncGenerator<RawRecord> {
  const writer = new ProtoWriter(4096);
  for await (const event of csvEventsFromChunks(chunks, grid, label, limits)) {
    const bytes = event.problem === null
      ? encodeEventRecord({ event: event.event, towerIndex: event.towerIndex, towerEt: event.towerEt }, writer)
      : encodeEventRecord({ event: event.event, error: `${event.problem} (line ${event.line})` }, writer);
    yield { bytes, offset: event.offset };
  }
}

export async function openRecordFile(input: string | NodeJS.ReadableStream, options: OpenOptions = {}): Promise<RecordSource> {
  const label = inputLabel(input, options.fileLabel);
  const { kind: format, chunks: all } = await peekInput(input, label, options.inflate);
  if (format === 'empty') {
    throw new InputError(label, 'empty file: neither an event file (no header record) nor a CSV tower file (no header line)', undefined, 0);
  }
  if (format === 'csv') {
    const chosen = await openCsvGrid(all, options.grid, label);
    const grid = { ...chosen.grid };
    const header: FileHeader = { kind: 'events', grid, producer: CSV_PRODUCER, label: '', formatVersion: FORMAT_VERSION };
    return { label, format: 'csv', header, records: csvRecords(chosen.chunks, grid, label, { maxEventGap: options.maxEventGap, gridOrigin: chosen.origin }) };
  }
  const { header, records } = await readFileHeader(all, label, options.maxRecordBytes);
  return { label, format: header.kind === 'events' ? 'events-file' : 'jets-file', header, records };
}

export async function openEventSource(input: string | NodeJS.ReadableStream, options: OpenOptions = {}): Promise<EventSource> {
  const source = await openRecordFile(input, options);
  if (source.format === 'jets-file') {
    await source.records.return(undefined);
    throw new InputError(source.label, 'this is a jets file, expected events (an event file or a CSV tower file)');
  }
  return source as EventSource;
}
