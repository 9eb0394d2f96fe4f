// A bounded, thinned sample of a run's events for plotting service time against towers per
// event: a seeded reservoir (each event kept with equal chance, whatever the run's length) in
// flat typed arrays of fixed size, plus the slowest event seen. Memory does not grow with the
// run: a 10^6-event run keeps the same few thousand points as a 10^4-event one.
//
// Layout: slot k holds event[k], towers[k], serviceNs[k] for k < filled.

import { makeRandom } from '../random.js';

/** Points kept by default: enough to show the spread, few enough that a report stays small. */
export const EVENT_SAMPLE_SIZE = 4000;
const SAMPLE_SEED = 31_337;

export class EventSample {
  readonly capacity: number;
  readonly event: Float64Array;
  readonly towers: Int32Array;
  readonly serviceNs: Float64Array;
  filled = 0;
  seen = 0;
  slowestEvent = -1;
  slowestNs = -1;
  private readonly random = makeRandom(SAMPLE_SEED);

  constructor(capacity = EVENT_SAMPLE_SIZE) {
    this.capacity = capacity;
    this.event = new Float64Array(capacity);
    this.towers = new Int32Array(capacity);
    this.serviceNs = new Float64Array(capacity);
  }

  /** One clustered event (reservoir sampling, Vitter's algorithm R; from memory). */
  add(event: number, towers: number, serviceNs: number): void {
    this.seen++;
    if (serviceNs > this.slowestNs) { this.slowestNs = serviceNs; this.slowestEvent = event; }
    let slot = this.filled;
    if (this.filled < this.capacity) this.filled++;
    else {
      slot = Math.floor(this.random() * this.seen);
      if (slot >= this.capacity) return;
    }
    this.event[slot] = event;
    this.towers[slot] = towers;
    this.serviceNs[slot] = serviceNs;
  }

  /** The kept points as plain objects, for the report. */
  points(): { event: number; towers: number; serviceUs: number }[] {
    const points = [];
    for (let k = 0; k < this.filled; k++) points.push({ event: this.event[k], towers: this.towers[k], serviceUs: this.serviceNs[k] / 1000 });
    return points;
  }
}
