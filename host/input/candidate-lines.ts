// Candidate files as text and jet columns: the pieces the three candidate formats share
// (candidate-reader.ts has the formats and the API).

import { InputError } from '../errors.js';
import type { CandidateEvent } from './candidate-reader.js';

/** a JSON line or CSV row longer than this makes the rest unreadable */
export const MAX_CANDIDATE_LINE_BYTES = 64 * 1024 * 1024;

export function emptyEvent(event: number | null, offset: number, error: string): CandidateEvent {
  const none = new Float64Array(0);
  return { event, offset, count: 0, pt: none, rapidity: none, phi: none, mass: none, hasMass: false, error };
}

export function quote(text: string): string {
  return JSON.stringify(text.length > 40 ? `${text.slice(0, 40)}…` : text);
}

export interface Line {
  text: string;
  offset: number;
  /** line number, from 1 */
  number: number;
}

/** Lines of a text input with the byte offset of each; LF or CRLF; the last may lack its end. */
export async function* lines(chunks: AsyncIterable<Uint8Array>, label: string): AsyncGenerator<Line> {
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

/** Jets one candidate event may hold: each jet holds at least one tower, and no grid has more
 * cells than this (host/clustering/grid.ts checkGrid), so a CSV that goes on past it is refused
 * rather than grown without bound. */
export const MAX_CANDIDATE_JETS_PER_EVENT = 1 << 22;

/** Growable per-event jet columns, reused from event to event. */
export class JetColumns {
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
