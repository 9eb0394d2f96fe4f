// A candidate jets file from an outside implementation may carry only what tolerance mode
// reads (clustering-spec.md section 7: pt, y, phi as reported): JetsRecords with pt, y, phi
// and nothing else are read as jets, not as inconsistent records. Hand-made bytes in the
// standard protobuf encoding (proto/jetlag.proto); the jets are invented.

import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { openCandidate, type CandidateEvent } from '../host/input/candidate-reader.js';
import { encodeJetsFileHeader } from '../host/formats/jets-codec.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('minimal-jets');

/** field `field` as packed doubles (wire type 2) */
function packedDoubles(field: number, values: number[]): Buffer {
  const body = Buffer.alloc(8 * values.length);
  values.forEach((v, k) => body.writeDoubleLE(v, 8 * k));
  return Buffer.concat([Buffer.from([(field << 3) | 2, body.length]), body]);
}

/** one delimited JetsRecord: event number, then the given packed double fields */
function jetsRecord(event: number, fields: [number, number[]][]): Buffer {
  const body = Buffer.concat([Buffer.from([0x08, event]), ...fields.map(([f, v]) => packedDoubles(f, v))]);
  return Buffer.concat([Buffer.from([body.length]), body]);
}

// JetsRecord fields: 6 pt, 7 y, 8 phi, 9 mass
const PT = 6, Y = 7, PHI = 8, MASS = 9;

async function readAll(bytes: Buffer): Promise<CandidateEvent[]> {
  const path = join(dir, `c${Math.random().toString(36).slice(2)}.jets`);
  writeFileSync(path, bytes);
  const source = await openCandidate(path);
  const out: CandidateEvent[] = [];
  for await (const event of source.events) out.push(event);
  return out;
}

const header = Buffer.from(encodeJetsFileHeader(DEFAULT_GRID, { ...DEFAULT_SETTINGS, engine: 'outside-emulation' }));

describe('a jets file candidate with only pt, y and phi', () => {
  it('gives the jets as written', async () => {
    const [event] = await readAll(Buffer.concat([header, jetsRecord(0, [[PT, [50, 20]], [Y, [-1.45, 0.55]], [PHI, [1.03, 3.98]]])]));
    expect([event.error, event.count, [...event.pt], [...event.rapidity], [...event.phi]]).toEqual(['', 2, [50, 20], [-1.45, 0.55], [1.03, 3.98]]);
  });

  it('has no mass unless mass is written', async () => {
    const events = await readAll(Buffer.concat([
      header,
      jetsRecord(0, [[PT, [50]], [Y, [0.1]], [PHI, [1]]]),
      jetsRecord(1, [[PT, [50]], [Y, [0.1]], [PHI, [1]], [MASS, [3]]]),
    ]));
    expect(events.map((e) => [e.hasMass, e.mass[0]])).toEqual([[false, 0], [true, 3]]);
  });

  it('is still inconsistent when y and pt differ in length', async () => {
    const [event] = await readAll(Buffer.concat([header, jetsRecord(0, [[PT, [50, 20]], [Y, [0.1]], [PHI, [1, 2]]])]));
    expect(event.error).toMatch(/^inconsistent jets record/);
  });
});
