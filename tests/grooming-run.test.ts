// `jetlag run --trim … --softdrop …` (clustering-spec.md section 12): the workers groom each
// event's jets, grooming is a stage of its own in the summary and the report, the check
// compares the groomed rows bit for bit, and the jets file carries them.

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as generateMain } from '../host/cli/commands/generate.js';
import { runEvents } from '../host/pipeline/run.js';
import { formatReport } from '../host/measure/report.js';
import { openRecordFile } from '../host/input/event-source.js';
import { decodeJetsRecord } from '../host/formats/jets-codec.js';
import { firstGroomingDifference } from '../host/validate/grooming-bit-exact.js';
import { makeClusterer } from '../host/clustering/clusterers.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type GroomingSettings } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('grooming-run');
const grooming: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } };
const settings = { ...DEFAULT_SETTINGS, radius: 1, ptMin: 20 };

describe('jetlag run with grooming', () => {
  it('grooms in the workers, checks the groomed rows, reports grooming as a stage and writes them', async () => {
    const events = join(dir, 'events.pb');
    const out = join(dir, 'jets.pb');
    expect(await generateMain(['--events', '4', '--pileup', '30', '--seed', '5', '--out', events, '-q'], fakeIo().io)).toBe(0);
    const summary = await runEvents({ input: events, workers: 1, batch: 2, check: { mode: 'all', fraction: 1, seed: 1 }, settings, grooming, out, force: true });
    expect([summary.check.checked, summary.check.agreeing]).toEqual([4, 4]);
    expect(summary.configuration.grooming).toEqual(grooming);
    expect(summary.latency.grooming?.count).toBe(4);
    expect(formatReport(summary)).toMatch(/\n {4}grooming +4 /);
    const source = await openRecordFile(out);
    expect(source.header.settings?.grooming).toEqual(grooming);
    let jets = 0;
    for await (const record of source.records) {
      const decoded = decodeJetsRecord(record.bytes);
      expect(decoded.jets.trim?.pt.length).toBe(decoded.jets.count);
      expect(decoded.jets.softDrop?.zg.length).toBe(decoded.jets.count);
      jets += decoded.jets.count;
    }
    expect(jets).toBeGreaterThan(0);
  }, 120_000);

  it('leaves grooming out of the summary when it is off', async () => {
    const events = join(dir, 'plain.pb');
    expect(await generateMain(['--events', '2', '--seed', '6', '--out', events, '-q'], fakeIo().io)).toBe(0);
    const summary = await runEvents({ input: events, workers: 1, batch: 2, check: { mode: 'none', fraction: 0, seed: 1 }, settings });
    expect(summary.latency.grooming).toBeUndefined();
    expect(summary.configuration.grooming).toBeUndefined();
  }, 60_000);
});

describe('the bit-exact check of groomed rows', () => {
  it('names the first groomed value whose bits differ, and nothing when all agree', () => {
    const towerIndex = Int32Array.of(100, 101, 164, 300, 301);
    const towerEt = Float64Array.of(50, 20, 5, 40, 1);
    const cluster = () => makeClusterer('reference', DEFAULT_GRID, { ...DEFAULT_SETTINGS, radius: 1 }, null, null, 'run', grooming).cluster(towerIndex, towerEt);
    const a = cluster();
    const b = cluster();
    expect(firstGroomingDifference(a, b)).toBeNull();
    b.softDrop!.zg[0] = -b.softDrop!.zg[0] || -0;
    expect(firstGroomingDifference(a, b)?.field).toBe('softDrop.zg');
    expect(firstGroomingDifference({ ...a, trim: undefined }, a)?.field).toBe('trim');
  });
});
