// When each event is due. Closed loop: events go as fast as the pool takes them (it measures
// capacity, not latency under load). Open loop: event i is due at a scheduled
// time fixed before the run (fixed spacing for --rate, exponential gaps from a seeded generator
// for --poisson), and its latency starts at that scheduled time whatever the host was doing,
// so a stalled pool shows up as queueing delay instead of hiding it (no coordinated omission).

import { makeRandom } from '../random.js';

export type ArrivalMode =
  | { kind: 'closed' }
  | { kind: 'fixed'; rateHz: number }
  | { kind: 'poisson'; rateHz: number; seed: number };

/** The host's monotonic clock in integer-valued ns (performance.now has sub-µs resolution in Node). */
export function nowNs(): number {
  return Math.round(performance.now() * 1e6);
}

/**
 * Scheduled arrival offsets, in ns from the run's start, for events 0, 1, 2, ... in input order.
 * Poisson arrivals have independent exponential gaps of mean 1/rate (common practice).
 */
export class ArrivalSchedule {
  readonly mode: ArrivalMode;
  private index = 0;
  private elapsedNs = 0;
  private readonly uniform: (() => number) | null;

  constructor(mode: ArrivalMode) {
    if (mode.kind !== 'closed' && !(mode.rateHz > 0 && Number.isFinite(mode.rateHz))) {
      throw new Error(`arrival rate must be a positive finite number of Hz, got ${mode.rateHz}`);
    }
    this.mode = mode;
    this.uniform = mode.kind === 'poisson' ? makeRandom(mode.seed) : null;
  }

  get openLoop(): boolean {
    return this.mode.kind !== 'closed';
  }

  /** Offset of the next event in ns (integer); closed loop has no schedule and returns 0. */
  next(): number {
    const mode = this.mode;
    const k = this.index++;
    if (mode.kind === 'closed') return 0;
    if (mode.kind === 'fixed') return Math.round((k * 1e9) / mode.rateHz);
    // the first Poisson event is due one gap after the start, like every later one;
    // 1 - u lies in (0, 1], so the logarithm is finite
    this.elapsedNs += (-Math.log(1 - this.uniform!()) * 1e9) / mode.rateHz;
    return Math.round(this.elapsedNs);
  }
}
