// `jetlag export` of a jets file keeps each event's cluster_time_ns and tower count (the
// event_towers field of the jets record). The expected values come from the files themselves,
// read with protobufjs under proto/jetlag.proto, not through jetlag's codec.

import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gunzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import protobuf from 'protobufjs';
import { main as cluster } from '../host/cli/commands/cluster.js';
import { main as generate } from '../host/cli/commands/generate.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { runEvents } from '../host/pipeline/run.js';
import { decodeJetsRecord, encodeJetsFileHeader, encodeJetsRecord } from '../host/formats/jets-codec.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { loadJetlagSchema } from './support/proto-schema.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('io-export-event-figures');
const THRESHOLD_GEV = 0.4;

/** every delimited message of a (maybe gzipped) file, the header first */
function messages(path: string): Uint8Array[] {
  let bytes: Uint8Array = readFileSync(path);
  if (bytes[0] === 0x1f && bytes[1] === 0x8b) bytes = gunzipSync(bytes);
  const reader = protobuf.Reader.create(bytes);
  const out: Uint8Array[] = [];
  while (reader.pos < reader.len) out.push(reader.bytes());
  return out;
}

let towersAtOrBelowThreshold = 0;

/** event number -> towers with et above the threshold, from the event file */
function towersAboveThreshold(eventsPath: string): Map<number, number> {
  const EventRecord = loadJetlagSchema().lookupType('jetlag.EventRecord');
  const counts = new Map<number, number>();
  for (const bytes of messages(eventsPath).slice(1)) {
    const record = EventRecord.toObject(EventRecord.decode(bytes), { longs: Number, arrays: true, defaults: true }) as { event: number; towerEt: number[] };
    counts.set(record.event, record.towerEt.filter((et) => et > THRESHOLD_GEV).length);
    towersAtOrBelowThreshold += record.towerEt.filter((et) => !(et > THRESHOLD_GEV)).length;
  }
  return counts;
}

/** event number -> [cluster_time_ns, event_towers or null], from the jets file */
function recordedFigures(jetsPath: string): Map<number, [number, number | null]> {
  const JetsRecord = loadJetlagSchema().lookupType('jetlag.JetsRecord');
  const figures = new Map<number, [number, number | null]>();
  for (const bytes of messages(jetsPath).slice(1)) {
    const decoded = JetsRecord.decode(bytes);
    const message = decoded as unknown as { eventTowers?: number | null };
    const record = JetsRecord.toObject(decoded, { longs: Number, defaults: true }) as { event: number; clusterTimeNs: number };
    const present = Object.prototype.hasOwnProperty.call(message, 'eventTowers') && message.eventTowers !== null && message.eventTowers !== undefined;
    figures.set(record.event, [record.clusterTimeNs, present ? Number(message.eventTowers) : null]);
  }
  return figures;
}

async function exported(jetsPath: string, format: 'csv' | 'jsonl'): Promise<string[]> {
  const io = fakeIo();
  expect(await exportMain([jetsPath, '--format', format, '-q'], io.io)).toBe(0);
  return io.stdout().split('\n').filter((line) => line !== '');
}

/** checks both export forms against the file's own figures and the event file's tower counts */
async function expectExportCarriesFigures(jetsPath: string, eventsPath: string): Promise<void> {
  towersAtOrBelowThreshold = 0;
  const towers = towersAboveThreshold(eventsPath);
  // the threshold must matter, or a count of all towers would pass too
  expect(towersAtOrBelowThreshold).toBeGreaterThan(0);
  const figures = recordedFigures(jetsPath);
  expect(figures.size).toBe(towers.size);
  for (const [event, [timeNs, eventTowers]] of figures) {
    expect(timeNs).toBeGreaterThan(0);
    expect(eventTowers).toBe(towers.get(event));
  }
  const lines = (await exported(jetsPath, 'jsonl')).map((line) => JSON.parse(line) as { event: number; cluster_time_ns: number; towers: number });
  expect(lines.map((line) => [line.event, line.cluster_time_ns, line.towers])).toEqual([...figures].map(([event, [timeNs]]) => [event, timeNs, towers.get(event)]));
  const [header, ...rows] = await exported(jetsPath, 'csv');
  const columns = header.split(',');
  expect(columns.slice(-2)).toEqual(['cluster_time_ns', 'towers']);
  expect(rows.length).toBeGreaterThan(0);
  for (const row of rows) {
    const cells = row.split(',');
    const event = Number(cells[0]);
    expect([Number(cells[columns.length - 2]), Number(cells[columns.length - 1])]).toEqual([figures.get(event)![0], towers.get(event)]);
  }
}

describe('jetlag export of a jets file: cluster_time_ns and towers per event', () => {
  it('carries both for every event of a `jetlag cluster` output', async () => {
    const events = join(dir, 'cluster-events.pb');
    const jetsPath = join(dir, 'cluster-jets.pb');
    expect(await generate(['--events', '5', '--pileup', '20', '--seed', '31', '--out', events, '-q'], fakeIo().io)).toBe(0);
    expect(await cluster([events, '--threshold', String(THRESHOLD_GEV), '--format', 'jets', '--out', jetsPath, '-q'], fakeIo().io)).toBe(0);
    await expectExportCarriesFigures(jetsPath, events);
  });

  it('carries both for every event of a `jetlag run --out` jets file', async () => {
    const events = join(dir, 'run-events.pb');
    const jetsPath = join(dir, 'run-jets.pb');
    expect(await generate(['--events', '5', '--pileup', '20', '--seed', '32', '--out', events, '-q'], fakeIo().io)).toBe(0);
    await runEvents({ input: events, workers: 1, batch: 2, check: { mode: 'none', fraction: 0, seed: 1 }, settings: { ...DEFAULT_SETTINGS, threshold: THRESHOLD_GEV }, out: jetsPath, force: true });
    await expectExportCarriesFigures(jetsPath, events);
  }, 60_000);

  it('writes an older file\'s missing tower count as absent (empty cell, null), not as 0', async () => {
    const path = join(dir, 'old-style.pb');
    const JetsRecord = loadJetlagSchema().lookupType('jetlag.JetsRecord');
    // a jets file as written before event_towers existed: the record by protobufjs, field 23 never set
    const header = encodeJetsFileHeader(DEFAULT_GRID, { ...DEFAULT_SETTINGS, engine: 'older writer' });
    const record = JetsRecord.encodeDelimited(JetsRecord.fromObject({ event: 3, px: [10], py: [0], pz: [0], e: [10], pt: [10], y: [0], phi: [0], mass: [0], constituentCount: [1], clusterTimeNs: 777 })).finish();
    writeFileSync(path, Buffer.concat([header, record]));
    expect(await exported(path, 'csv')).toEqual(['event,pt,y,phi,m,cluster_time_ns,towers', '3,10,0,0,0,777,']);
    const [line] = await exported(path, 'jsonl');
    expect(JSON.parse(line)).toMatchObject({ event: 3, cluster_time_ns: 777, towers: null });
  });
});

describe('the event_towers field of a jets record', () => {
  it('round-trips 0 as 0 and leaves a record without it as null', () => {
    expect(decodeJetsRecord(encodeJetsRecord({ event: 1, eventTowers: 0 })).eventTowers).toBe(0);
    expect(decodeJetsRecord(encodeJetsRecord({ event: 1, eventTowers: 4096 })).eventTowers).toBe(4096);
    expect(decodeJetsRecord(encodeJetsRecord({ event: 1 })).eventTowers).toBeNull();
  });

  it('is written under the schema\'s field number, with presence for 0', () => {
    const JetsRecord = loadJetlagSchema().lookupType('jetlag.JetsRecord');
    const zero = JetsRecord.decode(encodeJetsRecord({ event: 2, eventTowers: 0 })) as unknown as { eventTowers?: number | null };
    expect(Object.prototype.hasOwnProperty.call(zero, 'eventTowers') && zero.eventTowers === 0).toBe(true);
    const many = JetsRecord.decode(encodeJetsRecord({ event: 2, eventTowers: 321 })) as unknown as { eventTowers?: number };
    expect(many.eventTowers).toBe(321);
  });
});
