// The bit-exact checker (clustering-spec.md section 7, bit-exact mode) and the repro file of
// disagreeing events. Events come from the toy generator (invented data).

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { describeDifference, firstJetDifference, ulpDistance } from '../host/validate/bit-exact.js';
import { decodeEventRecord, encodeEventRecord } from '../host/formats/event-codec.js';
import { openEventSource } from '../host/input/event-source.js';
import { generateEvents } from '../host/generator/generate.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { ReproWriter } from '../host/output/repro-writer.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type JetSet } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('bit-exact');
const events = [...generateEvents(DEFAULT_GRID, { events: 6, pileup: 20, seed: 4 })];
const reference = new ReferenceClusterer(DEFAULT_GRID, { ...DEFAULT_SETTINGS, threshold: 0.2 });
const jets = events.map((e) => reference.cluster(e.towerIndex, e.towerEt));

function copy(set: JetSet): JetSet {
  return {
    count: set.count, px: set.px.slice(), py: set.py.slice(), pz: set.pz.slice(), energy: set.energy.slice(),
    pt: set.pt.slice(), rapidity: set.rapidity.slice(), phi: set.phi.slice(), mass: set.mass.slice(),
    towerCount: set.towerCount.slice(), towerStart: set.towerStart.slice(), towers: set.towers.slice(),
  };
}

/** the next double above x (x finite and positive) */
function nextUp(x: number): number {
  const view = new DataView(new ArrayBuffer(8));
  view.setFloat64(0, x);
  view.setBigUint64(0, view.getBigUint64(0) + 1n);
  return view.getFloat64(0);
}

describe('bit-exact comparison', () => {
  it('finds no difference between a jet set and its copy', () => {
    for (const set of jets) expect(firstJetDifference(copy(set), set)).toBeNull();
  });

  it('reports a one-ulp change in one jet\'s pt as a difference naming jet, field and both values', () => {
    const changed = copy(jets[2]);
    changed.pt[1] = nextUp(changed.pt[1]);
    const difference = firstJetDifference(changed, jets[2]);
    expect(difference).toEqual({ jet: 1, field: 'pt', engineValue: changed.pt[1], referenceValue: jets[2].pt[1] });
  });

  it('writes that difference as one line with event, jet, field, both values and the ulp distance', () => {
    const changed = copy(jets[2]);
    changed.pt[1] = nextUp(changed.pt[1]);
    const line = describeDifference(2, firstJetDifference(changed, jets[2])!);
    expect(line).toBe(`event 2, jet 1, pt: engine ${changed.pt[1]}, reference ${jets[2].pt[1]} (1 ulp apart)`);
  });

  it('tells -0 from 0', () => {
    const changed = copy(jets[0]);
    const original = copy(jets[0]);
    changed.mass[0] = -0;
    original.mass[0] = 0;
    expect(describeDifference(0, firstJetDifference(changed, original)!)).toBe('event 0, jet 0, mass: engine -0, reference 0 (0 ulps apart)');
  });

  it('reports a different constituent tower', () => {
    const changed = copy(jets[1]);
    changed.towers[changed.towerStart[0]] += 1;
    expect(firstJetDifference(changed, jets[1])?.field).toBe('towers[0]');
  });

  it('counts ulps across zero and refuses non-finite values', () => {
    expect(ulpDistance(Number.MIN_VALUE, -Number.MIN_VALUE)).toBe(2);
    expect(ulpDistance(1, 1)).toBe(0);
    expect(ulpDistance(NaN, 1)).toBeNull();
  });
});

describe('repro file of disagreeing events', () => {
  it('holds the chosen events whole, byte for byte, in an event file with the source grid', async () => {
    const path = join(dir, 'repro.events');
    const records = events.map((e) => encodeEventRecord({ event: e.event, towerIndex: e.towerIndex, towerEt: e.towerEt }));
    const repro = await ReproWriter.open(path, { grid: DEFAULT_GRID, source: 'toy.events', engine: 'wasm' });
    await repro.writeRecord(1, records[1]);
    await repro.writeRecord(4, records[4]);
    expect(await repro.close()).toBe(2);
    const source = await openEventSource(path);
    const read: Uint8Array[] = [];
    for await (const record of source.records) read.push(new Uint8Array(record.bytes));
    expect(read).toEqual([records[1], records[4]]);
    expect(source.header.grid).toEqual(DEFAULT_GRID);
    expect(source.header.label).toBe('events on which wasm and the reference disagree, from toy.events');
  });

  it('writes an event from its fields', async () => {
    const path = join(dir, 'fields.events');
    const repro = await ReproWriter.open(path, { grid: DEFAULT_GRID });
    await repro.writeEvent({ event: 3, towerIndex: events[3].towerIndex, towerEt: events[3].towerEt });
    await repro.close();
    const source = await openEventSource(path);
    const decoded = [];
    for await (const record of source.records) decoded.push(decodeEventRecord(record.bytes));
    expect(decoded.map((d) => d.event)).toEqual([3]);
    expect(decoded[0].towerEt).toEqual(events[3].towerEt);
  });

  it('refuses an event number that does not increase', async () => {
    const repro = await ReproWriter.open(join(dir, 'order.events'), { grid: DEFAULT_GRID });
    await repro.writeRecord(5, encodeEventRecord({ event: 5 }));
    expect(() => repro.writeRecord(5, encodeEventRecord({ event: 5 }))).toThrow(/comes after event 5/);
    await repro.abort();
  });

  it('with no disagreement still leaves a file with its header and no events', async () => {
    const path = join(dir, 'none.events');
    const repro = await ReproWriter.open(path, { grid: DEFAULT_GRID });
    expect(await repro.close()).toBe(0);
    const source = await openEventSource(path);
    let count = 0;
    for await (const _record of source.records) count++;
    expect(count).toBe(0);
  });
});
