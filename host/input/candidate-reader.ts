// Reading a candidate: the jets of an outside implementation (or of one of ours) that
// `jetlag compare` checks against the reference. Three formats, told apart by content (gzip
// either way, detected by record-reader.ts):
//
//   jets file   our own (proto/jetlag.proto): the header carries grid, settings and engine.
//               Every event has a record; an event with no record is missing. Only pt, y,
//               phi (of equal lengths) and optionally mass are read; px, py, pz, e and the
//               constituents may be left out. Groomed rows (trim, soft_drop) are read when
//               the record holds them.
//   JSON lines  the first non-blank byte is '{': one object per line, as `jetlag cluster`
//               writes them (jets-jsonl.ts): {"event":n,"jets":[{"pt":…,"y":…,"phi":…,"m":…}]}
//               or {"event":n,"error":"…"}; a jet's "trim" and "softdrop" objects (their
//               "pt" and "m") are read when every jet of the line has them; other keys are
//               ignored. Every event has a line
//               (a line can hold "jets":[]), so an event with no line is missing.
//   CSV         header `event,pt,y,phi` or `event,pt,y,phi,m` (or `jetlag export`'s with the
//               pileup columns after m, and the groomed columns after those, read but not
//               compared: groomed values are compared from jets files and JSON lines), then one row per jet, rows of
//               an event together. CSV cannot list an event without jets, so an event with
//               no rows has no jets.
//
// API
//   openCandidate(input, { fileLabel? }): Promise<CandidateSource>
//     -> { label, format, header (jets file only, else null), absentMeansEmpty, events }
//     events: AsyncGenerator<CandidateEvent>, in file order (order, duplicates and event
//     numbers are judged by the caller, which knows the events). Unreadable input (a broken
//     jets-file header or framing, a missing CSV header, a CSV row whose event number is
//     unreadable) throws InputError naming file, line (text formats) and byte offset, after
//     every event before it. Problems of one CSV row or JSON line name its line and byte.
//
// A CandidateEvent is one event's jets in flat arrays (count, pt, rapidity, phi, mass), or,
// with `error` set, an event the candidate says is invalid or whose jets cannot be read (a bad
// CSV row or JSON line with a readable event number, an inconsistent jets record). `event` is
// null for a jets record or JSON line too broken to say which event it is; the caller names
// it and goes on. Numbers: finite decimal literals in CSV (as for tower files); JSON numbers
// in JSON lines, where null (how our writer stores a NaN) reads back as NaN.

import { InputError } from '../errors.js';
import { peekInput, readFileHeader } from './event-source.js';
import type { FileHeader } from '../formats/file-header.js';
import { decodeJetsRecord } from '../formats/jets-codec.js';
import { inputLabel } from './record-reader.js';
import { oneLineText } from '../formats/line-text.js';
import { GROOMED_CSV_SUFFIXES } from '../formats/groomed-csv-columns.js';

export type CandidateFormat = 'jets-file' | 'jsonl' | 'csv';

export interface CandidateEvent {
  /** null when the record or line is too broken to say */
  event: number | null;
  /** byte offset (uncompressed) of the record, of the event's first CSV row, or of the line */
  offset: number;
  count: number;
  pt: Float64Array;
  rapidity: Float64Array;
  phi: Float64Array;
  /** zeros when the candidate gives no mass */
  mass: Float64Array;
  hasMass: boolean;
  /** groomed pt and mass per jet (spec section 12), for each groomer the candidate reports */
  groomed?: CandidateGroomed;
  /** '' for readable jets; else why the event has none */
  error: string;
}

export interface CandidateGroomed {
  trim?: { pt: Float64Array; mass: Float64Array };
  softdrop?: { pt: Float64Array; mass: Float64Array };
}

export interface CandidateSource {
  label: string;
  format: CandidateFormat;
  /** the jets file's header (grid, settings with engine); null for CSV and JSON lines */
  header: FileHeader | null;
  /** CSV: an event with no rows has no jets; the other formats list every event */
  absentMeansEmpty: boolean;
  events: AsyncGenerator<CandidateEvent>;
}

export interface CandidateOptions {
  fileLabel?: string;
  maxRecordBytes?: number;
}

/** the third: `jetlag export` of jets with pileup values (spec part two); the columns after m are not compared */
export const CANDIDATE_CSV_HEADERS = ['event,pt,y,phi', 'event,pt,y,phi,m', 'event,pt,y,phi,m,ghosts,area,ptRaw,rho,etCut,killed,subtractedAway'] as const;
/** a JSON line or CSV row longer than this makes the rest unreadable */
export const MAX_CANDIDATE_LINE_BYTES = 64 * 1024 * 1024;

const EVENT_NUMBER = /^[0-9]+$/;
const DECIMAL = /^[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$/;

function emptyEvent(event: number | null, offset: number, error: string): CandidateEvent {
  const none = new Float64Array(0);
  return { event, offset, count: 0, pt: none, rapidity: none, phi: none, mass: none, hasMass: false, error };
}

function quote(text: string): string {
  return JSON.stringify(text.length > 40 ? `${text.slice(0, 40)}…` : text);
}

export async function openCandidate(input: string | NodeJS.ReadableStream, options: CandidateOptions = {}): Promise<CandidateSource> {
  const label = inputLabel(input, options.fileLabel);
  const { prefix, kind, chunks: all } = await peekInput(input, label);
  if (kind === 'empty') {
    throw new InputError(label, 'empty file: not a jets file, JSON lines or CSV of jets', undefined, 0);
  }
  if (kind === 'records') {
    const { header, records } = await readFileHeader(all, label, options.maxRecordBytes);
    if (header.kind !== 'jets') {
      await records.return(undefined);
      throw new InputError(label, 'this is an event file, expected a candidate\'s jets (a jets file, JSON lines or CSV of jets)', undefined, 0);
    }
    return { label, format: 'jets-file', header, absentMeansEmpty: false, events: jetsFileEvents(records) };
  }
  // text: JSON lines when the first non-blank character (after a byte order mark) is '{'
  let pos = prefix[0] === 0xef && prefix[1] === 0xbb && prefix[2] === 0xbf ? 3 : 0;
  while (pos < prefix.length && (prefix[pos] === 0x20 || prefix[pos] === 0x0a || prefix[pos] === 0x0d || prefix[pos] === 0x09)) pos++;
  if (prefix[pos] === 0x7b) return { label, format: 'jsonl', header: null, absentMeansEmpty: false, events: jsonLineEvents(lines(all, label), label) };
  return { label, format: 'csv', header: null, absentMeansEmpty: true, events: csvEvents(lines(all, label), label) };
}


async function* jetsFileEvents(records: AsyncGenerator<{ bytes: Uint8Array; offset: number }>): AsyncGenerator<CandidateEvent> {
  for await (const record of records) {
    let decoded;
    try {
      decoded = decodeJetsRecord(record.bytes);
    } catch (error) {
      yield emptyEvent(null, record.offset, `bad jets record: ${(error as Error).message}`);
      continue;
    }
    if (decoded.error !== '') {
      yield emptyEvent(decoded.event, record.offset, `the candidate reports the event invalid: ${decoded.error}`);
      continue;
    }
    // tolerance mode reads pt, y, phi (and mass when given), so an outside implementation
    // may write only those; the record is judged on them alone
    const jets = decoded.jets;
    const count = jets.pt.length;
    const hasMass = jets.mass.length === count;
    if (jets.rapidity.length !== count || jets.phi.length !== count || !(hasMass || jets.mass.length === 0)) {
      const problem = decoded.problem !== '' ? decoded.problem
        : `pt has ${count} values, y ${jets.rapidity.length}, phi ${jets.phi.length}, mass ${jets.mass.length}`;
      yield emptyEvent(decoded.event, record.offset, `inconsistent jets record: ${problem}`);
      continue;
    }
    yield {
      event: decoded.event, offset: record.offset, count, pt: jets.pt, rapidity: jets.rapidity, phi: jets.phi,
      mass: hasMass ? jets.mass : new Float64Array(count), hasMass, error: '',
      ...(jets.trim || jets.softDrop ? {
        groomed: {
          ...(jets.trim ? { trim: { pt: jets.trim.pt, mass: jets.trim.mass } } : {}),
          ...(jets.softDrop ? { softdrop: { pt: jets.softDrop.pt, mass: jets.softDrop.mass } } : {}),
        },
      } : {}),
    };
  }
}

interface Line {
  text: string;
  offset: number;
  /** line number, from 1 */
  number: number;
}

/** Lines of a text input with the byte offset of each; LF or CRLF; the last may lack its end. */
async function* lines(chunks: AsyncIterable<Uint8Array>, label: string): AsyncGenerator<Line> {
  let carry: Buffer | null = null;
  let carryOffset = 0;
  let consumed = 0;
  let number = 0;
  for await (const raw of chunks) {
    const chunk = Buffer.from(raw.buffer, raw.byteOffset, raw.byteLength);
    const base = consumed;
    consumed += chunk.length;
    let start = 0;
    while (true) {
      const end = chunk.indexOf(10, start);
      if (end < 0) break;
      let bytes: Buffer = chunk.subarray(start, end);
      let offset = base + start;
      if (carry !== null) {
        bytes = Buffer.concat([carry, bytes]);
        offset = carryOffset;
        carry = null;
      }
      number++;
      if (bytes.length > MAX_CANDIDATE_LINE_BYTES) throw new InputError(label, `line longer than ${MAX_CANDIDATE_LINE_BYTES} bytes (the rest of the file is unreadable)`, undefined, offset, number);
      yield { text: lineText(bytes), offset, number };
      start = end + 1;
    }
    if (start < chunk.length) {
      const rest = chunk.subarray(start);
      if (carry === null) {
        carry = Buffer.from(rest);
        carryOffset = base + start;
      } else {
        carry = Buffer.concat([carry, rest]);
      }
      if (carry.length > MAX_CANDIDATE_LINE_BYTES) throw new InputError(label, `line longer than ${MAX_CANDIDATE_LINE_BYTES} bytes (the rest of the file is unreadable)`, undefined, carryOffset, number + 1);
    }
  }
  if (carry !== null && carry.length > 0) yield { text: lineText(carry), offset: carryOffset, number: number + 1 };
}

function lineText(bytes: Buffer): string {
  const end = bytes.length > 0 && bytes[bytes.length - 1] === 13 ? bytes.length - 1 : bytes.length;
  return bytes.toString('utf8', 0, end);
}

/** Growable per-event jet columns, reused from event to event. */
class JetColumns {
  count = 0;
  pt = new Float64Array(16);
  rapidity = new Float64Array(16);
  phi = new Float64Array(16);
  mass = new Float64Array(16);

  push(pt: number, y: number, phi: number, mass: number): void {
    if (this.count === this.pt.length) {
      const grow = (a: Float64Array) => { const b = new Float64Array(a.length * 2); b.set(a); return b; };
      this.pt = grow(this.pt);
      this.rapidity = grow(this.rapidity);
      this.phi = grow(this.phi);
      this.mass = grow(this.mass);
    }
    this.pt[this.count] = pt;
    this.rapidity[this.count] = y;
    this.phi[this.count] = phi;
    this.mass[this.count] = mass;
    this.count++;
  }

  /** owned copies, then empty again */
  take(event: number, offset: number, hasMass: boolean): CandidateEvent {
    const n = this.count;
    this.count = 0;
    return {
      event, offset, count: n, pt: this.pt.slice(0, n), rapidity: this.rapidity.slice(0, n), phi: this.phi.slice(0, n),
      mass: this.mass.slice(0, n), hasMass, error: '',
    };
  }
}

async function* csvEvents(input: AsyncGenerator<Line>, label: string): AsyncGenerator<CandidateEvent> {
  const columns = new JetColumns();
  let fields = 0;
  let columnNames: string[] = [];
  let headerSeen = false;
  let current: number | null = null;
  let currentOffset = 0;
  let currentError = '';
  let blankOffset = -1;
  let blankLine = 0;
  const finish = (): CandidateEvent => {
    const out = currentError !== '' ? emptyEvent(current, currentOffset, currentError) : columns.take(current!, currentOffset, columnNames[4] === 'm');
    columns.count = 0;
    currentError = '';
    return out;
  };
  for await (const { text: raw, offset, number } of input) {
    let text = raw;
    if (!headerSeen) {
      if (text.startsWith('\ufeff')) text = text.slice(1);
      // `jetlag export` of groomed jets ends the header with the groomed columns (groomed-csv-columns.ts)
      const suffix = GROOMED_CSV_SUFFIXES.find((ending) => text.endsWith(ending)) ?? '';
      const header = CANDIDATE_CSV_HEADERS.indexOf(text.slice(0, text.length - suffix.length) as (typeof CANDIDATE_CSV_HEADERS)[number]);
      if (header < 0) {
        throw new InputError(label, `missing header: expected "${CANDIDATE_CSV_HEADERS[0]}" or "${CANDIDATE_CSV_HEADERS[1]}", got ${quote(text)}`, undefined, offset, number);
      }
      columnNames = text.split(',');
      fields = columnNames.length;
      headerSeen = true;
      continue;
    }
    if (text.length === 0) {
      if (blankOffset < 0) { blankOffset = offset; blankLine = number; }
      continue;
    }
    if (blankOffset >= 0) {
      if (current !== null) yield finish();
      throw new InputError(label, 'bad event number "" (an empty line before more rows; the rest of the file is unreadable)', undefined, blankOffset, blankLine);
    }
    const parts = text.split(',');
    if (!EVENT_NUMBER.test(parts[0]) || !Number.isSafeInteger(Number(parts[0]))) {
      if (current !== null) yield finish();
      throw new InputError(label, `bad event number ${quote(parts[0])} (the rest of the file is unreadable)`, undefined, offset, number);
    }
    const event = Number(parts[0]);
    if (event !== current) {
      if (current !== null) yield finish();
      current = event;
      currentOffset = offset;
    }
    if (currentError !== '') continue;
    if (parts.length !== fields) {
      currentError = `row at line ${number}, byte ${offset} has ${parts.length} fields, expected ${fields}`;
      continue;
    }
    let bad = -1;
    for (let k = 1; k < fields; k++) {
      if (!DECIMAL.test(parts[k]) || !Number.isFinite(Number(parts[k]))) { bad = k; break; }
    }
    if (bad > 0) {
      currentError = `row at line ${number}, byte ${offset}: bad ${columnNames[bad]} ${quote(parts[bad])}`;
      continue;
    }
    columns.push(Number(parts[1]), Number(parts[2]), Number(parts[3]), columnNames[4] === 'm' ? Number(parts[4]) : 0);
  }
  if (!headerSeen) throw new InputError(label, `missing header: expected "${CANDIDATE_CSV_HEADERS[0]}"`, undefined, 0, 1);
  if (current !== null) yield finish();
}

function jsonValue(value: unknown): number {
  // our writer stores a non-finite double as null
  if (value === null) return NaN;
  return typeof value === 'number' ? value : NaN;
}

async function* jsonLineEvents(input: AsyncGenerator<Line>, label: string): AsyncGenerator<CandidateEvent> {
  void label;
  const columns = new JetColumns();
  for await (const { text, offset, number } of input) {
    const at = `line ${number} (byte ${offset})`;
    const trimmed = text.trim();
    if (trimmed.length === 0) continue;
    let value: unknown;
    try {
      value = JSON.parse(trimmed.startsWith('\ufeff') ? trimmed.slice(1) : trimmed);
    } catch (error) {
      yield emptyEvent(null, offset, `${at} is not JSON (${oneLineText((error as Error).message, 200)})`);
      continue;
    }
    const line = value as { event?: unknown; jets?: unknown; error?: unknown };
    if (typeof value !== 'object' || value === null || Array.isArray(value)) {
      yield emptyEvent(null, offset, `${at} is not a JSON object`);
      continue;
    }
    if (typeof line.event !== 'number' || !Number.isSafeInteger(line.event) || line.event < 0) {
      yield emptyEvent(null, offset, `${at} has no event number (an integer >= 0), got ${quote(JSON.stringify(line.event) ?? 'nothing')}`);
      continue;
    }
    const event = line.event;
    if (typeof line.error === 'string' && line.error !== '') {
      yield emptyEvent(event, offset, `the candidate reports the event invalid: ${oneLineText(line.error)}`);
      continue;
    }
    if (!Array.isArray(line.jets)) {
      yield emptyEvent(event, offset, `${at} has no "jets" array`);
      continue;
    }
    let problem = '';
    let hasMass = line.jets.length > 0;
    columns.count = 0;
    const groomed = new LineGroomed();
    for (let k = 0; k < line.jets.length; k++) {
      const jet = line.jets[k] as { pt?: unknown; y?: unknown; phi?: unknown; m?: unknown } | null;
      if (typeof jet !== 'object' || jet === null) { problem = `jet ${k} is not an object`; break; }
      const missing = (['pt', 'y', 'phi'] as const).find((key) => !(key in jet) || (typeof jet[key] !== 'number' && jet[key] !== null));
      if (missing) { problem = `jet ${k} has no number "${missing}"`; break; }
      if (!('m' in jet)) hasMass = false;
      columns.push(jsonValue(jet.pt), jsonValue(jet.y), jsonValue(jet.phi), 'm' in jet ? jsonValue(jet.m) : 0);
      groomed.add(jet as Record<string, unknown>);
    }
    if (problem !== '') {
      columns.count = 0;
      yield emptyEvent(event, offset, `${at}: ${problem}`);
      continue;
    }
    const taken = columns.take(event, offset, hasMass);
    const groomedColumns = groomed.columns(taken.count);
    yield groomedColumns ? { ...taken, groomed: groomedColumns } : taken;
  }
}

/** The "trim" and "softdrop" objects' pt and m of one line's jets; a groomer counts when every jet has it. */
class LineGroomed {
  private readonly values: Record<'trim' | 'softdrop', number[]> = { trim: [], softdrop: [] };

  add(jet: Record<string, unknown>): void {
    for (const name of ['trim', 'softdrop'] as const) {
      const groomed = jet[name] as { pt?: unknown; m?: unknown } | undefined;
      if (typeof groomed !== 'object' || groomed === null) continue;
      if ((typeof groomed.pt === 'number' || groomed.pt === null) && (typeof groomed.m === 'number' || groomed.m === null)) {
        this.values[name].push(jsonValue(groomed.pt), jsonValue(groomed.m));
      }
    }
  }

  columns(count: number): CandidateGroomed | null {
    if (count === 0) return null;
    const out: CandidateGroomed = {};
    for (const name of ['trim', 'softdrop'] as const) {
      const flat = this.values[name];
      if (flat.length !== 2 * count) continue;
      const pt = new Float64Array(count);
      const mass = new Float64Array(count);
      for (let k = 0; k < count; k++) { pt[k] = flat[2 * k]; mass[k] = flat[2 * k + 1]; }
      out[name] = { pt, mass };
    }
    return out.trim || out.softdrop ? out : null;
  }
}
