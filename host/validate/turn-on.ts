// Turn-on curves (clustering-spec.md section 13): a trigger's efficiency against the reference,
// binned in an offline quantity, with central Clopper-Pearson intervals at 68.27 %.
//
// Observables, each a pair (x from the reference, the candidate's value that must reach T):
//   jet1   x = pt of the reference's leading jet; passes when the candidate's leading jet >= T
//   jetN   the same with the n-th jet (multijet triggers): x = the reference's n-th jet pt
//   ht     x = the reference's HT; passes when the candidate's HT >= T
// Reference jets are those with pt >= ptMin (spec section 6; `jetlag compare` clusters with
// ptMin 0 and hands them over in decreasing pt); x is 0 when there is no such jet. Candidate
// jets are taken as the candidate reported them, in any order. HT is the scalar sum of jet pt
// above ptMin on both sides, in decreasing pt. A NaN pt never passes and never adds.
//
// Per curve: bin k of width B holds the events with k * B <= x < (k + 1) * B. Bins live in a
// Map from k to a slot of two flat Int32Arrays (events, passed) grown by doubling; only bins
// that saw an event exist, so a stray x far out costs one slot, not a million.

import { CONFIDENCE_68, clopperPearson } from './beta-quantile.js';

export type TurnOnObservable = 'jet1' | 'jetN' | 'ht';

export interface TurnOnRequest {
  observable: TurnOnObservable;
  /** GeV, on the candidate's side */
  threshold: number;
  /** GeV, the width of the bins in x */
  binWidth: number;
  /** jetN only: which jet, counting the leading one as 1 */
  jet?: number;
}

export interface TurnOnBin {
  lo: number;
  hi: number;
  events: number;
  passed: number;
  efficiency: number;
  low68: number;
  high68: number;
}

/** The JSON shape of `jetlag compare --json`'s turnOn entries (keys in this order). */
export interface TurnOnCurve {
  observable: TurnOnObservable;
  jet?: number;
  threshold: number;
  binWidth: number;
  bins: TurnOnBin[];
  /** GeV where the efficiency reaches 50 % and 95 %; null where never reached */
  x50: number | null;
  x95: number | null;
}

export const DEFAULT_TURN_ON_BIN_GEV = 5;

/** One curve being filled, event by event. */
export class TurnOnAccumulator {
  readonly request: TurnOnRequest;
  private readonly ptMin: number;
  private readonly jetNumber: number;
  private slotOfBin = new Map<number, number>();
  private binOfSlot = new Float64Array(64);
  private eventsOfSlot = new Int32Array(64);
  private passedOfSlot = new Int32Array(64);
  private scratch = new Float64Array(64);

  constructor(request: TurnOnRequest, ptMin: number) {
    this.request = { ...request };
    this.ptMin = ptMin;
    this.jetNumber = request.observable === 'jet1' ? 1 : request.observable === 'jetN' ? request.jet ?? 1 : 0;
    if (!(request.binWidth > 0 && Number.isFinite(request.binWidth))) throw new Error(`turn-on bin width must be finite and > 0, got ${request.binWidth}`);
    if (this.jetNumber < 0 || !Number.isInteger(this.jetNumber)) throw new Error(`turn-on jet number must be an integer >= 1, got ${request.jet}`);
  }

  /**
   * One event valid on both sides: the reference's jets in decreasing pt (all of them, ptMin is
   * applied here) and the candidate's jets in any order.
   */
  add(referencePt: Float64Array, referenceCount: number, candidatePt: Float64Array, candidateCount: number): void {
    const ptMin = this.ptMin;
    let x: number;
    let candidateValue: number;
    if (this.jetNumber === 0) {
      x = 0;
      for (let k = 0; k < referenceCount; k++) if (referencePt[k] >= ptMin) x += referencePt[k];
      candidateValue = this.candidateHt(candidatePt, candidateCount);
    } else {
      const n = this.jetNumber;
      x = referenceCount >= n && referencePt[n - 1] >= ptMin ? referencePt[n - 1] : 0;
      candidateValue = this.candidateNthLargest(candidatePt, candidateCount, n);
    }
    const passed = candidateValue >= this.request.threshold ? 1 : 0;
    const bin = Math.floor(x / this.request.binWidth);
    let slot = this.slotOfBin.get(bin);
    if (slot === undefined) {
      slot = this.slotOfBin.size;
      if (slot === this.eventsOfSlot.length) this.grow();
      this.slotOfBin.set(bin, slot);
      this.binOfSlot[slot] = bin;
    }
    this.eventsOfSlot[slot]++;
    this.passedOfSlot[slot] += passed;
  }

  /** the curve: bins in increasing x with their intervals, and the 50 % and 95 % points */
  curve(): TurnOnCurve {
    const { observable, threshold, binWidth } = this.request;
    const slots = [...this.slotOfBin.values()].sort((a, b) => this.binOfSlot[a] - this.binOfSlot[b]);
    const interval = new Float64Array(2);
    const bins: TurnOnBin[] = slots.map((slot) => {
      const k = this.binOfSlot[slot];
      const events = this.eventsOfSlot[slot];
      const passed = this.passedOfSlot[slot];
      clopperPearson(passed, events, CONFIDENCE_68, interval);
      return { lo: k * binWidth, hi: (k + 1) * binWidth, events, passed, efficiency: passed / events, low68: interval[0], high68: interval[1] };
    });
    const centres = slots.map((slot) => (this.binOfSlot[slot] + 0.5) * binWidth);
    const efficiencies = bins.map((bin) => bin.efficiency);
    const head = observable === 'jetN' ? { observable, jet: this.jetNumber } : { observable };
    return { ...head, threshold, binWidth, bins, x50: levelCrossing(centres, efficiencies, 0.5), x95: levelCrossing(centres, efficiencies, 0.95) };
  }

  private candidateHt(pt: Float64Array, count: number): number {
    // in decreasing pt, as the reference's HT is summed
    const sorted = this.sortedDecreasing(pt, count);
    let ht = 0;
    for (let k = 0; k < count; k++) if (sorted[k] >= this.ptMin) ht += sorted[k];
    return ht;
  }

  /** the n-th largest pt, or -Infinity with fewer than n jets (which never passes) */
  private candidateNthLargest(pt: Float64Array, count: number, n: number): number {
    if (n === 1) {
      let largest = -Infinity;
      for (let k = 0; k < count; k++) if (pt[k] > largest) largest = pt[k];
      return largest;
    }
    if (count < n) return -Infinity;
    return this.sortedDecreasing(pt, count)[n - 1];
  }

  /** pt[0, count) sorted decreasing, NaN last, in a reused scratch array */
  private sortedDecreasing(pt: Float64Array, count: number): Float64Array {
    if (this.scratch.length < count) this.scratch = new Float64Array(Math.max(count, 2 * this.scratch.length));
    const view = this.scratch.subarray(0, count);
    for (let k = 0; k < count; k++) view[k] = -pt[k]; // typed-array sort is increasing and puts NaN last
    view.sort();
    for (let k = 0; k < count; k++) view[k] = -view[k];
    return view;
  }

  private grow(): void {
    const size = 2 * this.eventsOfSlot.length;
    const grown = (from: Int32Array): Int32Array<ArrayBuffer> => { const to = new Int32Array(size); to.set(from); return to; };
    this.eventsOfSlot = grown(this.eventsOfSlot);
    this.passedOfSlot = grown(this.passedOfSlot);
    const bins = new Float64Array(size);
    bins.set(this.binOfSlot);
    this.binOfSlot = bins;
  }
}

/**
 * Where the curve first reaches `level` (spec section 13): the first bin, in increasing x,
 * whose efficiency is >= level gives x0 + (level - e0) * (x1 - x0) / (e1 - e0) with x1, e1 its
 * centre and efficiency and x0, e0 those of the bin before it; the first bin gives its own
 * centre. null when no bin reaches the level.
 */
export function levelCrossing(centres: readonly number[], efficiencies: readonly number[], level: number): number | null {
  for (let k = 0; k < centres.length; k++) {
    if (!(efficiencies[k] >= level)) continue;
    if (k === 0) return centres[0];
    const x0 = centres[k - 1];
    const e0 = efficiencies[k - 1];
    // e0 < level <= e1 here, so the denominator is > 0
    return x0 + ((level - e0) * (centres[k] - x0)) / (efficiencies[k] - e0);
  }
  return null;
}

const fixed = (value: number | null, digits: number): string => (value === null ? 'never' : value.toFixed(digits));

function curveTitle(curve: TurnOnCurve): string {
  const what = curve.observable === 'jet1' ? 'leading jet' : curve.observable === 'jetN' ? `jet ${curve.jet}` : 'HT';
  return `${what} >= ${curve.threshold} GeV`;
}

/** rows shown per curve at most; the flat parts below and above the rise are summed up */
const TABLE_ROWS_MAX = 24;

/**
 * A compact table per curve: the bins where the efficiency rises (from the last bin before
 * the first pass to the first bin after the last failure), the flat rest in one line each.
 */
export function formatTurnOnCurves(curves: readonly TurnOnCurve[]): string {
  const lines: string[] = [];
  for (const curve of curves) {
    const x = curve.observable === 'ht' ? 'HT' : 'pt';
    lines.push(`turn-on, ${curveTitle(curve)}, against the reference's ${curve.observable === 'ht' ? 'HT' : curve.observable === 'jet1' ? 'leading jet pt' : `jet ${curve.jet} pt`} in bins of ${curve.binWidth} GeV:` +
      ` 50 % at ${fixed(curve.x50, 1)} GeV, 95 % at ${fixed(curve.x95, 1)} GeV`);
    const bins = curve.bins;
    if (bins.length === 0) { lines.push('  no events'); continue; }
    let first = bins.findIndex((bin) => bin.passed > 0);
    let last = bins.length - 1;
    while (last >= 0 && bins[last].passed === bins[last].events) last--;
    if (first < 0) first = bins.length;
    first = Math.max(0, Math.min(first, last) - 1);
    last = Math.min(bins.length - 1, Math.max(last, first) + 1);
    if (last - first + 1 > TABLE_ROWS_MAX) last = first + TABLE_ROWS_MAX - 1;
    const summary = (from: number, to: number, where: string): void => {
      if (to < from) return;
      let events = 0;
      let passed = 0;
      for (let k = from; k <= to; k++) { events += bins[k].events; passed += bins[k].passed; }
      lines.push(`  ${where} ${bins[from].lo}-${bins[to].hi} GeV: ${to - from + 1} bins, ${events} events, ${passed} passed`);
    };
    summary(0, first - 1, 'below,');
    lines.push(`  ${`${x} GeV`.padEnd(13)} ${'events'.padStart(8)} ${'passed'.padStart(8)} ${'efficiency'.padStart(10)}  68 % interval`);
    for (let k = first; k <= last; k++) {
      const bin = bins[k];
      lines.push(`  ${`${bin.lo}-${bin.hi}`.padEnd(13)} ${String(bin.events).padStart(8)} ${String(bin.passed).padStart(8)} ${bin.efficiency.toFixed(4).padStart(10)}  [${bin.low68.toFixed(4)}, ${bin.high68.toFixed(4)}]`);
    }
    summary(last + 1, bins.length - 1, 'above,');
  }
  return lines.join('\n') + '\n';
}
