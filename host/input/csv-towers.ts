// CSV tower files (clustering-spec.md section 1): header `event,ieta,iphi,et`, then one row
// per tower.
//
// API
//   readCsvTowers(input, { grid, fileLabel?, maxEventGap?, gridOrigin? }): AsyncGenerator<CsvEvent>
//     input: a path ('-' is stdin), a readable stream, or chunks; gzip detected by content.
//     grid: the grid to read on (a `# grid` line before the header, csv-grid.ts, must agree
//     with it: openCsvTowers and event-source.ts take the stated grid first).
//     Yields every event number from 0 up to the last one in the file, in order (a number
//     with no rows is an empty event). An invalid event is yielded with its problem and the
//     byte offset of the offending row; the events around it go on. A missing header, a bad
//     or decreasing event number, a jump of more than maxEventGap (default 1,000,000) event
//     numbers past the previous one (spec section 1), or a line longer than 1 MiB makes the
//     rest unreadable:
//     every event whose rows all come before the offending line is yielded (the event being
//     read included: rows of one event are together, so a row with another number ends it;
//     spec: "the events before it are kept"), then InputError("<file>, byte N: ...") is
//     thrown, naming the line number too. A line longer than 1 MiB drops the event being read,
//     whose rows may go on. Every event carries the line number of its offset's row.
//   openCsvTowers(input, { grid?, fileLabel?, maxEventGap? }): Promise<{ grid, origin, events }>
//     the same, on the grid the file states if it states one (csv-grid.ts chooseCsvGrid).
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
//     bad event number. Empty lines at the end of the file are fine. Lines starting with `#`
//     before the header are comments (one may state the grid, csv-grid.ts); after it they are
//     bad event numbers like any other text.
//   - the jump of the first event is counted from -1 (events are numbered from 0): a first
//     event numbered maxEventGap or more is too far, as if an event -1 had come before.
//   - a tower outside the grid explains the grid assumed and where it came from the first
//     time in a file; later ones say only that they are outside.
//   - validation follows grid.ts findInvalidTower, on rows in input order so the first bad
//     row is the one reported: a bad field, then et non-finite (`1e999`), then ieta or iphi
//     outside the grid (checked separately: ieta * phiBins + iphi alone could land on
//     another tower), then |et| above 1e150, then a repeated tower.
//   - flat tower index = ieta * phiBins + iphi (spec section 1).
//
// Data layout: each chunk is one latin1 string (character k = byte k, so positions are byte
// offsets); lines and fields are index ranges into it, never split into arrays. The event
// being read keeps towerIndex Int32Array and towerEt Float64Array (grown by doubling, first
// towerCount entries used) and `seen`, a Uint8Array with one flag per grid tower, cleared
// tower by tower when the event ends.

import { InputError } from '../errors.js';
import { describeGrid, MAX_ABS_ET, sameGrid } from '../clustering/grid.js';
import { chooseCsvGrid, parseCsvGridLine, peekCsvGrid, type CsvGridOrigin } from './csv-grid.js';
import { inputLabel, readChunks } from './record-reader.js';
import type { Grid } from '../types.js';

export const CSV_HEADER = 'event,ieta,iphi,et';
export const MAX_CSV_LINE_BYTES = 1 << 20;
/** spec section 1: one corrupted digit must not turn into a billion empty events */
export const DEFAULT_MAX_EVENT_GAP = 1_000_000;

export interface CsvEvent {
  event: number;
  /** valid: offset of the event's first row (empty event: of the line after the gap); invalid: of the offending row */
  offset: number;
  /** line number (from 1) of the row at `offset` */
  line: number;
  towerIndex: Int32Array;
  towerEt: Float64Array;
  /** null when valid */
  problem: string | null;
}

export interface CsvReadLimits {
  /** largest jump of event numbers (default DEFAULT_MAX_EVENT_GAP) */
  maxEventGap?: number;
  /** where the grid came from, named when a tower falls outside it (default 'given') */
  gridOrigin?: CsvGridOrigin;
}

export interface ReadCsvOptions extends CsvReadLimits {
  grid: Grid;
  fileLabel?: string;
}

const CHAR_0 = 48;
const CHAR_9 = 57;
const CHAR_PLUS = 43;
const CHAR_MINUS = 45;
const CHAR_DOT = 46;
const CHAR_COMMA = 44;
const CHAR_E = 101;
const CHAR_UPPER_E = 69;

// Text is handled as latin1 (one character per byte), so character positions are byte
// offsets; the field scanners below accept ASCII only, and error texts decode the field as
// UTF-8 again to show it as written.

/** Shows a field in an error text, short and on one line. */
function quote(latin1: string): string {
  const text = Buffer.from(latin1, 'latin1').toString('utf8');
  return JSON.stringify(text.length > 40 ? `${text.slice(0, 40)}...` : text);
}

/** digits only, at most 2^53 - 1; -1 when not an event number */
function scanEventNumber(text: string, a: number, b: number): number {
  if (a >= b) return -1;
  let value = 0;
  for (let k = a; k < b; k++) {
    const c = text.charCodeAt(k);
    if (c < CHAR_0 || c > CHAR_9) return -1;
    value = value * 10 + (c - CHAR_0);
    if (value > Number.MAX_SAFE_INTEGER) return -1;
  }
  return value;
}

/** [+-] digits; NaN when not an integer (values beyond 2^53 lose precision: they lie outside every grid anyway) */
function scanInteger(text: string, a: number, b: number): number {
  let k = a;
  let sign = 1;
  if (k < b) {
    const c = text.charCodeAt(k);
    if (c === CHAR_MINUS) { sign = -1; k++; } else if (c === CHAR_PLUS) k++;
  }
  if (k >= b) return NaN;
  let value = 0;
  for (; k < b; k++) {
    const c = text.charCodeAt(k);
    if (c < CHAR_0 || c > CHAR_9) return NaN;
    value = value * 10 + (c - CHAR_0);
  }
  return sign * value;
}

/** [+-] (digits [. digits*] | . digits) [(e|E) [+-] digits] */
function isDecimal(text: string, a: number, b: number): boolean {
  let k = a;
  if (k < b) {
    const c = text.charCodeAt(k);
    if (c === CHAR_PLUS || c === CHAR_MINUS) k++;
  }
  let digits = 0;
  while (k < b) { const c = text.charCodeAt(k); if (c < CHAR_0 || c > CHAR_9) break; k++; digits++; }
  if (k < b && text.charCodeAt(k) === CHAR_DOT) {
    k++;
    while (k < b) { const c = text.charCodeAt(k); if (c < CHAR_0 || c > CHAR_9) break; k++; digits++; }
  }
  if (digits === 0) return false;
  if (k < b) {
    const c = text.charCodeAt(k);
    if (c !== CHAR_E && c !== CHAR_UPPER_E) return false;
    k++;
    if (k < b) {
      const s = text.charCodeAt(k);
      if (s === CHAR_PLUS || s === CHAR_MINUS) k++;
    }
    let exponentDigits = 0;
    while (k < b) { const d = text.charCodeAt(k); if (d < CHAR_0 || d > CHAR_9) break; k++; exponentDigits++; }
    if (exponentDigits === 0) return false;
  }
  return k === b;
}

/**
 * Builds the events from rows fed in order. Holds the event being read: its towers (growable
 * typed arrays), and its first problem with that row's offset.
 */
class CsvEventBuilder {
  private readonly etaBins: number;
  private readonly phiBins: number;
  private readonly seen: Uint8Array;
  private current = -1; // event number being read, -1 before the first row
  private next = 0; // next event number to yield
  private firstRowOffset = 0;
  private firstRowLine = 0;
  private towerIndex = new Int32Array(1024);
  private towerEt = new Float64Array(1024);
  private towerCount = 0;
  private problem: string | null = null;
  private problemOffset = 0;
  private problemLine = 0;
  private lastEvent = -1; // the previous event number, -1 before the first (events start at 0)
  private outsideExplained = false;

  constructor(readonly grid: Grid, private readonly label: string, private readonly limits: CsvReadLimits = {}) {
    this.etaBins = grid.etaBins;
    this.phiBins = grid.phiBins;
    this.seen = new Uint8Array(grid.etaBins * grid.phiBins);
  }

  /** One data line, text[a, b) without its line end, at byte `offset`, line `line`. Pushes finished events to `out`. */
  row(text: string, a: number, b: number, offset: number, line: number, out: Pending[]): void {
    let comma = text.indexOf(',', a);
    if (comma < 0 || comma > b) comma = b;
    const event = scanEventNumber(text, a, comma);
    if (event < 0) {
      this.finishCurrent(out);
      throw new InputError(this.label, `bad event number ${quote(text.slice(a, comma))} (the rest of the file is unreadable)`, undefined, offset, line);
    }
    if (event < this.current) {
      this.finishCurrent(out);
      throw new InputError(this.label, `event number ${event} after ${this.current}: numbers must not decrease (the rest of the file is unreadable)`, undefined, offset, line);
    }
    if (event > this.current) {
      this.finishCurrent(out);
      const maxGap = this.limits.maxEventGap ?? DEFAULT_MAX_EVENT_GAP;
      if (event - this.lastEvent > maxGap) {
        const after = this.lastEvent < 0 ? 'as the first event' : `after ${this.lastEvent}`;
        throw new InputError(this.label, `event number ${event} ${after} jumps more than ${maxGap} numbers (--max-event-gap; the rest of the file is unreadable)`, undefined, offset, line);
      }
      // numbers skipped over are empty events, expanded lazily (a gap may be large)
      if (this.next < event) out.push({ emptyFrom: this.next, emptyTo: event, offset, line });
      this.next = event;
      this.current = event;
      this.lastEvent = event;
      this.firstRowOffset = offset;
      this.firstRowLine = line;
    }
    if (this.problem !== null) return; // only the first problem of an event is reported
    const problem = this.checkRow(text, comma, b);
    if (problem !== null) {
      this.problem = problem;
      this.problemOffset = offset;
      this.problemLine = line;
    }
  }

  /** The first tower outside the grid in a file says which grid was assumed and why. */
  private outside(ieta: string, iphi: string): string {
    const short = `tower (ieta ${ieta}, iphi ${iphi}) is outside the grid of ${this.etaBins} x ${this.phiBins} towers`;
    if (this.outsideExplained) return short;
    this.outsideExplained = true;
    const origin = this.limits.gridOrigin ?? 'given';
    return `${short} (the grid assumed: ${describeGrid(this.grid)}, ${origin}; a CSV from another grid states it in a "# grid" line before the header, or give --eta-min, --eta-max, --eta-bins, --phi-bins)`;
  }

  /** Fields after the event number: text[comma, b) starts at its comma. null when the row is a good tower (then it is added). */
  private checkRow(text: string, comma: number, b: number): string | null {
    // field k spans [starts[k], ends[k]); the first field (the event number) is already read
    let fields = 1;
    let c1 = -1, c2 = -1, c3 = -1;
    for (let k = comma; k < b; k++) {
      if (text.charCodeAt(k) !== CHAR_COMMA) continue;
      fields++;
      if (fields === 2) c1 = k; else if (fields === 3) c2 = k; else if (fields === 4) c3 = k;
    }
    if (fields !== 4) return `row has ${fields} field${fields === 1 ? '' : 's'}, expected 4 (${CSV_HEADER})`;
    const ieta = scanInteger(text, c1 + 1, c2);
    if (Number.isNaN(ieta)) return `ieta ${quote(text.slice(c1 + 1, c2))} is not an integer`;
    const iphi = scanInteger(text, c2 + 1, c3);
    if (Number.isNaN(iphi)) return `iphi ${quote(text.slice(c2 + 1, c3))} is not an integer`;
    if (!isDecimal(text, c3 + 1, b)) return `et ${quote(text.slice(c3 + 1, b))} is not a decimal number`;
    const etText = text.slice(c3 + 1, b);
    const et = Number(etText);
    if (!Number.isFinite(et)) return `et ${etText} is not finite`;
    if (!(ieta >= 0 && ieta < this.etaBins && iphi >= 0 && iphi < this.phiBins)) {
      return this.outside(text.slice(c1 + 1, c2), text.slice(c2 + 1, c3));
    }
    if (Math.abs(et) > MAX_ABS_ET) return `|et| ${etText} is above ${MAX_ABS_ET}`;
    const index = ieta * this.phiBins + iphi;
    if (this.seen[index]) return `tower (ieta ${text.slice(c1 + 1, c2)}, iphi ${text.slice(c2 + 1, c3)}) repeats an earlier row of the event`;
    this.seen[index] = 1;
    if (this.towerCount === this.towerIndex.length) this.grow();
    this.towerIndex[this.towerCount] = index;
    this.towerEt[this.towerCount] = et;
    this.towerCount++;
    return null;
  }

  private grow(): void {
    const index = new Int32Array(this.towerIndex.length * 2);
    index.set(this.towerIndex);
    this.towerIndex = index;
    const et = new Float64Array(this.towerEt.length * 2);
    et.set(this.towerEt);
    this.towerEt = et;
  }

  private finishCurrent(out: Pending[]): void {
    if (this.current < 0) return;
    const count = this.towerCount;
    for (let k = 0; k < count; k++) this.seen[this.towerIndex[k]] = 0;
    const valid = this.problem === null;
    out.push({
      event: this.current,
      offset: valid ? this.firstRowOffset : this.problemOffset,
      line: valid ? this.firstRowLine : this.problemLine,
      towerIndex: valid ? this.towerIndex.slice(0, count) : new Int32Array(0),
      towerEt: valid ? this.towerEt.slice(0, count) : new Float64Array(0),
      problem: this.problem,
    });
    this.next = this.current + 1;
    this.towerCount = 0;
    this.problem = null;
  }

  /** Before the rest of the file becomes unreadable: the event being read is complete. */
  finishBeforeUnreadable(out: Pending[]): void {
    this.finishCurrent(out);
    this.current = -1;
  }

  /** At end of input. */
  end(out: Pending[]): void {
    this.finishCurrent(out);
    this.current = -1;
  }
}

function emptyEvent(event: number, offset: number, line: number): CsvEvent {
  return { event, offset, line, towerIndex: new Int32Array(0), towerEt: new Float64Array(0), problem: null };
}

/** a finished event, or a run of empty events [emptyFrom, emptyTo) */
type Pending = CsvEvent | { emptyFrom: number; emptyTo: number; offset: number; line: number };

function* expand(pending: Pending[]): Generator<CsvEvent> {
  for (const item of pending) {
    if ('emptyFrom' in item) {
      for (let event = item.emptyFrom; event < item.emptyTo; event++) yield emptyEvent(event, item.offset, item.line);
    } else {
      yield item;
    }
  }
}

const BYTE_ORDER_MARK = '\xef\xbb\xbf'; // the UTF-8 byte order mark, as latin1

/**
 * Splits chunks into lines with their byte offsets and runs them through the header check
 * and the event builder. Each chunk becomes one latin1 string; a line cut by the chunk end
 * is carried over as text.
 */
class CsvLineSplitter {
  private carry = ''; // start of a line cut by a chunk end
  private carryOffset = 0;
  private consumed = 0;
  private headerSeen = false;
  private blankOffset = -1; // offset of the first empty line of a run of empty lines
  private blankLine = 0;
  private lineNumber = 0; // of the line last seen, from 1

  constructor(private readonly builder: CsvEventBuilder, private readonly label: string) {}

  feed(chunk: Uint8Array, out: Pending[]): void {
    const bytes = Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
    const textOffset = this.consumed - this.carry.length; // byte offset of text[0]
    this.consumed += bytes.length;
    const text = this.carry + bytes.toString('latin1');
    let pos = 0;
    while (pos < text.length) {
      const newline = text.indexOf('\n', pos);
      if (newline < 0) break;
      this.line(text, pos, newline, textOffset + pos, out);
      pos = newline + 1;
    }
    this.carry = pos < text.length ? text.slice(pos) : '';
    this.carryOffset = textOffset + pos;
    this.checkLength(this.carry.length, this.carryOffset, this.lineNumber + 1);
  }

  end(out: Pending[]): void {
    if (this.carry.length > 0) {
      const text = this.carry;
      this.carry = '';
      this.line(text, 0, text.length, this.carryOffset, out);
    }
    if (!this.headerSeen) {
      throw new InputError(this.label, `missing header: expected "${CSV_HEADER}", ${this.lineNumber === 0 ? 'the file is empty' : 'found only comments'}`, undefined, this.consumed, this.lineNumber + 1);
    }
    this.builder.end(out);
  }

  private checkLength(length: number, offset: number, line: number): void {
    if (length > MAX_CSV_LINE_BYTES) {
      throw new InputError(this.label, `line longer than ${MAX_CSV_LINE_BYTES} bytes (the rest of the file is unreadable)`, undefined, offset, line);
    }
  }

  private line(text: string, a: number, b: number, offset: number, out: Pending[]): void {
    const lineNumber = ++this.lineNumber;
    this.checkLength(b - a, offset, lineNumber);
    if (b > a && text.charCodeAt(b - 1) === 13) b--; // CRLF
    if (!this.headerSeen) {
      let line = text.slice(a, b);
      if (lineNumber === 1 && line.startsWith(BYTE_ORDER_MARK)) line = line.slice(BYTE_ORDER_MARK.length);
      if (line.startsWith('#')) { this.comment(line, offset, lineNumber); return; }
      if (line !== CSV_HEADER && !isSpacedHeader(line)) {
        throw new InputError(this.label, `missing header: expected "${CSV_HEADER}", got ${quote(line)}`, undefined, offset, lineNumber);
      }
      this.headerSeen = true;
      return;
    }
    if (b === a) {
      if (this.blankOffset < 0) { this.blankOffset = offset; this.blankLine = lineNumber; }
      return;
    }
    if (this.blankOffset >= 0) {
      this.builder.finishBeforeUnreadable(out);
      throw new InputError(this.label, 'bad event number "" (an empty line before more rows; the rest of the file is unreadable)', undefined, this.blankOffset, this.blankLine);
    }
    this.builder.row(text, a, b, offset, lineNumber, out);
  }

  /** A comment line before the header: a grid statement must agree with the grid read on. */
  private comment(line: string, offset: number, lineNumber: number): void {
    const stated = parseCsvGridLine(line, this.label, offset, lineNumber);
    if (stated !== null && !sameGrid(stated, this.builder.grid)) {
      throw new InputError(this.label, `the file states the grid ${describeGrid(stated)}, but is read on ${describeGrid(this.builder.grid)}: leave out the grid options or make them agree (the rest of the file is unreadable)`, undefined, offset, lineNumber);
    }
  }
}

/** Events of a CSV tower file; see the API note at the top of this file. */
export async function* readCsvTowers(
  input: string | NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
  options: ReadCsvOptions,
): AsyncGenerator<CsvEvent> {
  const label = options.fileLabel ?? (typeof input === 'string' ? (input === '-' ? '<stdin>' : input) : '<stream>');
  const chunks = typeof input === 'string' || 'pipe' in input ? readChunks(input as string | NodeJS.ReadableStream, label) : input;
  yield* csvEventsFromChunks(chunks as AsyncIterable<Uint8Array>, options.grid, label, options);
}

/** A CSV tower file on the grid it states (if it states one), else on `grid` or the default. */
export async function openCsvTowers(
  input: string | NodeJS.ReadableStream,
  options: { grid?: Grid; fileLabel?: string; maxEventGap?: number },
): Promise<{ grid: Grid; origin: CsvGridOrigin; events: AsyncGenerator<CsvEvent> }> {
  const label = inputLabel(input, options.fileLabel);
  const { stated, chunks } = await peekCsvGrid(readChunks(input, label), label);
  let chosen;
  try {
    chosen = chooseCsvGrid(stated, options.grid, label);
  } catch (error) {
    await chunks.return(undefined);
    throw error;
  }
  const events = csvEventsFromChunks(chunks, chosen.grid, label, { maxEventGap: options.maxEventGap, gridOrigin: chosen.origin });
  return { ...chosen, events };
}

export async function* csvEventsFromChunks(chunks: AsyncIterable<Uint8Array>, grid: Grid, label: string, limits: CsvReadLimits = {}): AsyncGenerator<CsvEvent> {
  const splitter = new CsvLineSplitter(new CsvEventBuilder(grid, label, limits), label);
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
export function parseCsvTowersText(text: string, grid: Grid, label = '<text>', limits: CsvReadLimits = {}): { events: CsvEvent[]; error: InputError | null } {
  const splitter = new CsvLineSplitter(new CsvEventBuilder(grid, label, limits), label);
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

/** The header with spaces or tabs around its names (`event, ieta, iphi, et`) is the header too. */
function isSpacedHeader(line: string): boolean {
  const names = line.split(',').map((name) => name.trim());
  return names.join(',') === CSV_HEADER;
}
