// `jetlag export JETS --format events-csv`: one row per valid event of a jets file, those
// without jets too, so that time against towers can be plotted from CSV. Expected values are
// read from the jets file with protobufjs under proto/jetlag.proto, not through jetlag's codec.

import { readFileSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import protobuf from 'protobufjs';
import { main as cluster } from '../host/cli/commands/cluster.js';
import { main as generate } from '../host/cli/commands/generate.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { encodeJetsFileHeader } from '../host/formats/jets-codec.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { loadJetlagSchema } from './support/proto-schema.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('io-export-events-csv');

interface RecordFigures { event: number; jets: number; clusterTimeNs: number; eventTowers: number | null; error: string }

function records(path: string): RecordFigures[] {
  const JetsRecord = loadJetlagSchema().lookupType('jetlag.JetsRecord');
  const reader = protobuf.Reader.create(readFileSync(path));
  reader.bytes(); // the file header
  const out: RecordFigures[] = [];
  while (reader.pos < reader.len) {
    const decoded = JetsRecord.decode(reader.bytes());
    const present = decoded as unknown as { eventTowers?: number | null };
    const record = JetsRecord.toObject(decoded, { longs: Number, arrays: true, defaults: true }) as { event: number; pt: number[]; clusterTimeNs: number; error: string };
    const hasTowers = Object.prototype.hasOwnProperty.call(present, 'eventTowers') && present.eventTowers !== null && present.eventTowers !== undefined;
    out.push({ event: record.event, jets: record.pt.length, clusterTimeNs: record.clusterTimeNs, eventTowers: hasTowers ? Number(present.eventTowers) : null, error: record.error });
  }
  return out;
}

describe('jetlag export --format events-csv', () => {
  it('writes one row per event, events without jets included', async () => {
    const events = join(dir, 'events.pb');
    const jetsPath = join(dir, 'jets.pb');
    expect(await generate(['--events', '12', '--pileup', '5', '--seed', '41', '--out', events, '-q'], fakeIo().io)).toBe(0);
    // a high ptMin leaves some events without jets
    expect(await cluster([events, '--ptmin', '60', '--format', 'jets', '--out', jetsPath, '-q'], fakeIo().io)).toBe(0);
    const expected = records(jetsPath);
    expect(expected.some((record) => record.jets === 0)).toBe(true);
    const io = fakeIo();
    expect(await exportMain([jetsPath, '--format', 'events-csv', '-q'], io.io)).toBe(0);
    const [header, ...rows] = io.stdout().split('\n').filter((line) => line !== '');
    expect(header).toBe('event,jets,cluster_time_ns,towers');
    expect(rows).toEqual(expected.map((record) => `${record.event},${record.jets},${record.clusterTimeNs},${record.eventTowers}`));
  });

  it('leaves an invalid event out with a line on stderr, and an unrecorded tower count empty', async () => {
    const path = join(dir, 'mixed.pb');
    const JetsRecord = loadJetlagSchema().lookupType('jetlag.JetsRecord');
    const header = encodeJetsFileHeader(DEFAULT_GRID, { ...DEFAULT_SETTINGS, engine: 'older writer' });
    const good = JetsRecord.encodeDelimited(JetsRecord.fromObject({ event: 0, clusterTimeNs: 500 })).finish();
    const bad = JetsRecord.encodeDelimited(JetsRecord.fromObject({ event: 1, error: 'tower 9 repeats' })).finish();
    writeFileSync(path, Buffer.concat([header, good, bad]));
    const io = fakeIo();
    expect(await exportMain([path, '--format', 'events-csv'], io.io)).toBe(0);
    expect(io.stdout()).toBe('event,jets,cluster_time_ns,towers\n0,0,500,\n');
    expect(io.stderr()).toContain('event 1');
    expect(io.stderr()).toContain('tower 9 repeats (invalid event, no CSV rows written)');
  });

  it('refuses an event file with one usage line and writes no output', async () => {
    const events = join(dir, 'towers.pb');
    const out = join(dir, 'towers-events.csv');
    expect(await generate(['--events', '2', '--seed', '42', '--out', events, '-q'], fakeIo().io)).toBe(0);
    const io = fakeIo();
    await expect(exportMain([events, '--format', 'events-csv', '--out', out], io.io)).rejects.toThrow('--format events-csv takes a jets file');
    expect(existsSync(out)).toBe(false);
  });
});
