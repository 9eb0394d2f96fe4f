// CSV tower files (clustering-spec.md section 1): header `event,ieta,iphi,et`, then one row
// per tower.
//
// API
//   readCsvTowers(input, { grid, fileLabel? }): AsyncGenerator<CsvEvent>
//     input: a path ('-' is stdin), a readable stream, or chunks; gzip detected by content.
//     Yields every event number from 0 up to the last one in the file, in order (a number
//     with no rows is an empty event). An invalid event is yielded with its problem and the
//     byte offset of the offending row; the events around it go on. A missing header, a bad
//     or decreasing event number, or a line longer than 1 MiB makes the rest unreadable:
//     the events completed before it are yielded, then InputError("<file>, byte N: ...")
//     is thrown (the event whose rows were being read at that point is not yielded: its rows
//     may go on further down).
//   parseCsvTowersText(text, grid): for tests and small inputs, the same on a whole string.
//
// Readings of the spec, decided here:
//   - the header line is exactly `event,ieta,iphi,et` (an optional UTF-8 byte order mark
//     before it is skipped); lines end in LF or CRLF; the last line may lack its end.
//   - an event number is digits only (`007` is 7), at most 2^53 - 1; `ieta`, `iphi` are an
//     optional sign and digits; `et` is [+-] digits [. digits] or [+-] [digits] . digits, with
//     an optional exponent e[+-]digits; nothing else (no spaces, quotes, hex, `_`, nan, inf).
//   - a row whose first field is a good event number belongs to that event even when the row
//     is bad otherwise (other than four fields, a bad field): that event becomes invalid. A
//     row whose first field is not an event number (an empty line in the middle, text) is a
//     bad event number. Empty lines at the end of the file are fine.
//   - validation follows grid.ts findInvalidTower, on rows in input order so the first bad
//     row is the one reported: a bad field, then et non-finite (`1e999`), then ieta or iphi
//     outside the grid (checked separately: ieta * phiBins + iphi alone could land on
//     another tower), then |et| above 1e150, then a repeated tower.
//   - flat tower index = ieta * phiBins + iphi (spec section 1).

import { InputError } from './args.js';
import { MAX_ABS_ET } from './grid.js';
import { readChunks } from './record-reader.js';
import type { Grid } from './types.js';

export const CSV_HEADER = 'event,ieta,iphi,et';
export const MAX_CSV_LINE_BYTES = 1 << 20;

export interface CsvEvent {
  event: number;
  /** valid: offset of the event's first row (empty event: of the line after the gap); invalid: of the offending row */
  offset: number;
  towerIndex: Int32Array;
  towerEt: Float64Array;
  /** null when valid */
  problem: string | null;
}

export interface ReadCsvOptions {
  grid: Grid;
  fileLabel?: string;
}

const EVENT_NUMBER = /^[0-9]+$/;
const INTEGER = /^[+-]?[0-9]+$/;
const DECIMAL = /^[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$/;

/** Shows a field in an error text, short and on one line. */
function quote(text: string): string {
  return JSON.stringify(text.length > 40 ? `${text.slice(0, 40)}...` : text);
}

/**
 * Builds the events from rows fed in order. Holds the event being read: its towers, row
 * offsets and first problem.
 */
class CsvEventBuilder {
  private readonly etaBins: number;
  private readonly phiBins: number;
  private readonly seen: Uint8Array;
  private current = -1; // event number being read, -1 before the first row
  private next = 0; // next event number to yield
  private firstRowOffset = 0;
  private towerIndex: number[] = [];
  private towerEt: number[] = [];
  private problem: string | null = null;
  private problemOffset = 0;

  constructor(grid: Grid, private readonly label: string) {
    this.etaBins = grid.etaBins;
    this.phiBins = grid.phiBins;
    this.seen = new Uint8Array(grid.etaBins * grid.phiBins);
  }

  /** One data line (without its line end). Pushes finished events to `out`. */
  row(line: string, offset: number, out: Pending[]): void {
    const comma = line.indexOf(',');
    const first = comma < 0 ? line : line.slice(0, comma);
    if (!EVENT_NUMBER.test(first) || Number(first) > Number.MAX_SAFE_INTEGER) {
      throw new InputError(this.label, `bad event number ${quote(first)} (the rest of the file is unreadable)`, undefined, offset);
    }
    const event = Number(first);
    if (event < this.current) {
      throw new InputError(this.label, `event number ${event} after ${this.current}: numbers must not decrease (the rest of the file is unreadable)`, undefined, offset);
    }
    if (event > this.current) {
      this.finishCurrent(out);
      // numbers skipped over are empty events, expanded lazily (a gap may be huge)
      if (this.next < event) out.push({ emptyFrom: this.next, emptyTo: event, offset });
      this.next = event;
      this.current = event;
      this.firstRowOffset = offset;
    }
    if (this.problem !== null) return; // only the first problem of an event is reported
    const problem = this.checkRow(line);
    if (problem !== null) {
      this.problem = problem;
      this.problemOffset = offset;
    }
  }

  /** null when the row is a good tower (then it is added), else the problem. */
  private checkRow(line: string): string | null {
    const fields = line.split(',');
    if (fields.length !== 4) return `row has ${fields.length} field${fields.length === 1 ? '' : 's'}, expected 4 (${CSV_HEADER})`;
    const [, ietaText, iphiText, etText] = fields;
    if (!INTEGER.test(ietaText)) return `ieta ${quote(ietaText)} is not an integer`;
    if (!INTEGER.test(iphiText)) return `iphi ${quote(iphiText)} is not an integer`;
    if (!DECIMAL.test(etText)) return `et ${quote(etText)} is not a decimal number`;
    const ieta = Number(ietaText);
    const iphi = Number(iphiText);
    const et = Number(etText);
    if (!Number.isFinite(et)) return `et ${etText} is not finite`;
    if (!(ieta >= 0 && ieta < this.etaBins && iphi >= 0 && iphi < this.phiBins)) {
      return `tower (ieta ${ietaText}, iphi ${iphiText}) is outside the grid of ${this.etaBins} x ${this.phiBins} towers`;
    }
    if (Math.abs(et) > MAX_ABS_ET) return `|et| ${etText} is above ${MAX_ABS_ET}`;
    const index = ieta * this.phiBins + iphi;
    if (this.seen[index]) return `tower (ieta ${ietaText}, iphi ${iphiText}) repeats an earlier row of the event`;
    this.seen[index] = 1;
    this.towerIndex.push(index);
    this.towerEt.push(et);
    return null;
  }

  private finishCurrent(out: Pending[]): void {
    if (this.current < 0) return;
    for (const index of this.towerIndex) this.seen[index] = 0;
    const valid = this.problem === null;
    out.push({
      event: this.current,
      offset: valid ? this.firstRowOffset : this.problemOffset,
      towerIndex: valid ? Int32Array.from(this.towerIndex) : new Int32Array(0),
      towerEt: valid ? Float64Array.from(this.towerEt) : new Float64Array(0),
      problem: this.problem,
    });
    this.next = this.current + 1;
    this.towerIndex = [];
    this.towerEt = [];
    this.problem = null;
  }

  /** At end of input. */
  end(out: Pending[]): void {
    this.finishCurrent(out);
    this.current = -1;
  }
}

function emptyEvent(event: number, offset: number): CsvEvent {
  return { event, offset, towerIndex: new Int32Array(0), towerEt: new Float64Array(0), problem: null };
}

/** a finished event, or a run of empty events [emptyFrom, emptyTo) */
type Pending = CsvEvent | { emptyFrom: number; emptyTo: number; offset: number };

function* expand(pending: Pending[]): Generator<CsvEvent> {
  for (const item of pending) {
    if ('emptyFrom' in item) {
      for (let event = item.emptyFrom; event < item.emptyTo; event++) yield emptyEvent(event, item.offset);
    } else {
      yield item;
    }
  }
}

/**
 * Splits chunks into lines with their byte offsets and runs them through the header check
 * and the event builder.
 */
class CsvLineSplitter {
  private carry: Buffer | null = null; // start of a line cut by a chunk end
  private carryOffset = 0;
  private consumed = 0;
  private headerSeen = false;
  private blankOffset = -1; // offset of the first empty line of a run of empty lines

  constructor(private readonly builder: CsvEventBuilder, private readonly label: string) {}

  feed(chunk: Uint8Array, out: Pending[]): void {
    const bytes = Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
    const base = this.consumed;
    this.consumed += bytes.length;
    let pos = 0;
    if (this.carry !== null) {
      const newline = bytes.indexOf(10);
      if (newline < 0) {
        this.carry = Buffer.concat([this.carry, bytes]);
        this.checkLength(this.carry.length, this.carryOffset);
        return;
      }
      const line = Buffer.concat([this.carry, bytes.subarray(0, newline)]);
      this.carry = null;
      this.line(line, 0, line.length, this.carryOffset, out);
      pos = newline + 1;
    }
    while (pos < bytes.length) {
      const newline = bytes.indexOf(10, pos);
      if (newline < 0) {
        this.carry = Buffer.from(bytes.subarray(pos)); // own copy: the chunk may be large
        this.carryOffset = base + pos;
        this.checkLength(this.carry.length, this.carryOffset);
        return;
      }
      this.line(bytes, pos, newline, base + pos, out);
      pos = newline + 1;
    }
  }

  end(out: Pending[]): void {
    if (this.carry !== null) {
      const line = this.carry;
      this.carry = null;
      this.line(line, 0, line.length, this.carryOffset, out);
    }
    if (!this.headerSeen) throw new InputError(this.label, `missing header: expected "${CSV_HEADER}", the file is empty`, undefined, 0);
    this.builder.end(out);
  }

  private checkLength(length: number, offset: number): void {
    if (length > MAX_CSV_LINE_BYTES) {
      throw new InputError(this.label, `line longer than ${MAX_CSV_LINE_BYTES} bytes (the rest of the file is unreadable)`, undefined, offset);
    }
  }

  private line(bytes: Buffer, start: number, end: number, offset: number, out: Pending[]): void {
    this.checkLength(end - start, offset);
    if (end > start && bytes[end - 1] === 13) end--; // CRLF
    // the field patterns are ASCII-only, so any non-ASCII text fails them; utf8 keeps error texts readable
    let text = bytes.toString('utf8', start, end);
    if (!this.headerSeen) {
      if (text.startsWith('\ufeff')) text = text.slice(1);
      if (text !== CSV_HEADER) {
        throw new InputError(this.label, `missing header: expected "${CSV_HEADER}", got ${quote(text)}`, undefined, offset);
      }
      this.headerSeen = true;
      return;
    }
    if (text.length === 0) {
      if (this.blankOffset < 0) this.blankOffset = offset;
      return;
    }
    if (this.blankOffset >= 0) {
      throw new InputError(this.label, 'bad event number "" (an empty line before more rows; the rest of the file is unreadable)', undefined, this.blankOffset);
    }
    this.builder.row(text, offset, out);
  }
}

/** Events of a CSV tower file; see the API note at the top of this file. */
export async function* readCsvTowers(
  input: string | NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
  options: ReadCsvOptions,
): AsyncGenerator<CsvEvent> {
  const label = options.fileLabel ?? (typeof input === 'string' ? (input === '-' ? '<stdin>' : input) : '<stream>');
  const chunks = typeof input === 'string' || 'pipe' in input ? readChunks(input as string | NodeJS.ReadableStream, label) : input;
  yield* csvEventsFromChunks(chunks as AsyncIterable<Uint8Array>, options.grid, label);
}

export async function* csvEventsFromChunks(chunks: AsyncIterable<Uint8Array>, grid: Grid, label: string): AsyncGenerator<CsvEvent> {
  const splitter = new CsvLineSplitter(new CsvEventBuilder(grid, label), label);
  const out: Pending[] = [];
  try {
    for await (const chunk of chunks) {
      splitter.feed(chunk, out);
      // yield before the next await so memory holds one chunk's events
      yield* expand(out);
      out.length = 0;
    }
    splitter.end(out);
  } catch (error) {
    // events completed before an unreadable line come out first
    yield* expand(out);
    throw error;
  }
  yield* expand(out);
}

/** The same on a whole text (tests, small inputs): the events, and the error ending the file if any. */
export function parseCsvTowersText(text: string, grid: Grid, label = '<text>'): { events: CsvEvent[]; error: InputError | null } {
  const splitter = new CsvLineSplitter(new CsvEventBuilder(grid, label), label);
  const pending: Pending[] = [];
  try {
    splitter.feed(Buffer.from(text, 'utf8'), pending);
    splitter.end(pending);
  } catch (error) {
    if (!(error instanceof InputError)) throw error;
    return { events: [...expand(pending)], error };
  }
  return { events: [...expand(pending)], error: null };
}
