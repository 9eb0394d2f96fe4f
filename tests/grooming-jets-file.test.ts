// `jetlag cluster --trim … --softdrop … --format jets`: the jets file's header names the
// grooming and its records hold the same groomed values as the JSON lines.

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as cluster } from '../host/cli/commands/cluster.js';
import { main as generate } from '../host/cli/commands/generate.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { openRecordFile } from '../host/input/event-source.js';
import { decodeJetsRecord } from '../host/formats/jets-codec.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('grooming-jets-file');

describe('jetlag cluster with grooming into a jets file', () => {
  it('writes the grooming settings and the same groomed values as the JSON lines', async () => {
    const events = join(dir, 'events.pb');
    const jetsPath = join(dir, 'jets.pb');
    expect(await generate(['--events', '3', '--pileup', '30', '--seed', '21', '--out', events, '-q'], fakeIo().io)).toBe(0);
    const common = [events, '--radius', '1.0', '--ptmin', '20', '--trim', '0.2:0.05', '--softdrop', '0.1:0', '-q'];
    expect(await cluster([...common, '--format', 'jets', '--out', jetsPath], fakeIo().io)).toBe(0);
    const io = fakeIo();
    expect(await cluster([...common, '--format', 'jsonl', '--no-towers'], io.io)).toBe(0);
    const lineJets = io.stdout().split('\n').filter((line) => line !== '').flatMap((line) => JSON.parse(line).jets);

    const source = await openRecordFile(jetsPath);
    expect(source.header.settings?.grooming).toEqual({ trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } });
    const fileJets: { trim: number[]; softdrop: number[] }[] = [];
    for await (const record of source.records) {
      const { jets, problem } = decodeJetsRecord(record.bytes);
      expect(problem).toBe('');
      for (let k = 0; k < jets.count; k++) {
        fileJets.push({
          trim: [jets.trim!.pt[k], jets.trim!.mass[k], jets.trim!.subjets[k], jets.trim!.towerCount[k]],
          softdrop: [jets.softDrop!.pt[k], jets.softDrop!.mass[k], jets.softDrop!.zg[k], jets.softDrop!.deltaRg[k]],
        });
      }
    }
    expect(fileJets.length).toBeGreaterThan(0);
    expect(fileJets).toEqual(lineJets.map((jet: { trim: Record<string, number>; softdrop: Record<string, number> }) => ({
      trim: [jet.trim.pt, jet.trim.m, jet.trim.subjets, jet.trim.n],
      softdrop: [jet.softdrop.pt, jet.softdrop.m, jet.softdrop.zg, jet.softdrop.Rg],
    })));
  });
});

describe('jetlag export of a groomed jets file', () => {
  it('writes the groomed columns after the plain ones, equal to the file\'s values', async () => {
    const events = join(dir, 'export-events.pb');
    const jetsPath = join(dir, 'export-jets.pb');
    expect(await generate(['--events', '2', '--pileup', '20', '--seed', '22', '--out', events, '-q'], fakeIo().io)).toBe(0);
    expect(await cluster([events, '--radius', '1.0', '--ptmin', '20', '--trim', '0.2:0.05', '--softdrop', '0.1:1', '-q', '--out', jetsPath], fakeIo().io)).toBe(0);
    const io = fakeIo();
    expect(await exportMain([jetsPath, '--format', 'csv', '-q'], io.io)).toBe(0);
    const [header, ...rows] = io.stdout().split('\n').filter((line) => line !== '');
    expect(header).toBe('event,pt,y,phi,m,trimPt,trimY,trimPhi,trimM,trimN,trimSubjets,softdropPt,softdropY,softdropPhi,softdropM,softdropN,softdropZg,softdropRg,cluster_time_ns,towers');
    const source = await openRecordFile(jetsPath);
    const expected: string[] = [];
    for await (const record of source.records) {
      const { event, jets, clusterTimeNs, eventTowers } = decodeJetsRecord(record.bytes);
      for (let k = 0; k < jets.count; k++) {
        const t = jets.trim!;
        const s = jets.softDrop!;
        expected.push([event, jets.pt[k], jets.rapidity[k], jets.phi[k], jets.mass[k], t.pt[k], t.rapidity[k], t.phi[k], t.mass[k], t.towerCount[k], t.subjets[k],
          s.pt[k], s.rapidity[k], s.phi[k], s.mass[k], s.towerCount[k], s.zg[k], s.deltaRg[k], clusterTimeNs, eventTowers].map(String).join(','));
      }
    }
    expect(rows.length).toBeGreaterThan(0);
    expect(rows).toEqual(expected);
  });
});

describe('jetlag compare of an exported groomed CSV', () => {
  it('reads the plain columns and agrees; without --softdrop on the reference side no groomed figures', async () => {
    const events = join(dir, 'csv-events.pb');
    const jetsPath = join(dir, 'csv-jets.pb');
    const csvPath = join(dir, 'jets.csv');
    expect(await generate(['--events', '2', '--pileup', '20', '--seed', '23', '--out', events, '-q'], fakeIo().io)).toBe(0);
    expect(await cluster([events, '--radius', '1.0', '--ptmin', '20', '--softdrop', '0.1:0', '-q', '--out', jetsPath], fakeIo().io)).toBe(0);
    expect(await exportMain([jetsPath, '--format', 'csv', '--out', csvPath, '-q'], fakeIo().io)).toBe(0);
    const io = fakeIo();
    expect(await compareMain([events, csvPath, '--radius', '1.0', '--ptmin', '20', '--json', '-'], io.io)).toBe(0);
    const report = JSON.parse(io.stdout());
    expect(report.jets.matched).toBeGreaterThan(0);
    expect(report.events.agreeing).toBe(report.events.compared);
    expect(report.groomed).toEqual([]);
  });
});
