// The event assembler of CSV tower files: rows in, events out (csv-towers.ts has the API
// and the readings of the spec).
//
// Data layout: each chunk is one latin1 string (character k = byte k, so positions are byte
// offsets); lines and fields are index ranges into it, never split into arrays. The event
// being read keeps towerIndex Int32Array and towerEt Float64Array (grown by doubling, first
// towerCount entries used) and `seen`, a Uint8Array with one flag per grid tower, cleared
// tower by tower when the event ends.

import { InputError } from '../errors.js';
import { describeGrid, MAX_ABS_ET } from '../clustering/grid.js';
import type { CsvGridOrigin } from './csv-grid.js';
import { CHAR_COMMA, CSV_HEADER, isDecimal, quote, scanEventNumber, scanInteger } from './csv-fields.js';
import type { Grid } from '../types.js';

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

/**
 * Builds the events from rows fed in order. Holds the event being read: its towers (growable
 * typed arrays), and its first problem with that row's offset.
 */
export class CsvEventBuilder {
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
export type Pending = CsvEvent | { emptyFrom: number; emptyTo: number; offset: number; line: number };

export function* expand(pending: Pending[]): Generator<CsvEvent> {
  for (const item of pending) {
    if ('emptyFrom' in item) {
      for (let event = item.emptyFrom; event < item.emptyTo; event++) yield emptyEvent(event, item.offset, item.line);
    } else {
      yield item;
    }
  }
}
