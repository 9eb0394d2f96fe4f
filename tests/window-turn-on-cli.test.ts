// The window finder as a candidate (`jetlag cluster --emulate window:W:SEEDET`) and its
// turn-on curves in `jetlag compare`, end to end. Events come from the toy generator
// (invented data, fictional Halden ring).

import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { main as generateMain } from '../host/cli/commands/generate.js';
import { openCandidate } from '../host/input/candidate-reader.js';
import { UsageError } from '../host/errors.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('window');
const eventsPath = join(dir, 'events.pb');
const turnOnArgs = ['--turn-on', '40,60', '--turn-on-jet', '2', '--turn-on-ht', '120'];

async function windowCandidate(format: 'jets' | 'jsonl'): Promise<string> {
  const out = join(dir, `window.${format}`);
  const code = await clusterMain([eventsPath, '--emulate', 'window:9:5', '--threshold', '0.5', '--format', format, '--out', out, '--quiet', '--force'], fakeIo().io);
  expect(code).toBe(0);
  return out;
}

async function compareJson(candidate: string, ...extra: string[]) {
  const fake = fakeIo();
  await compareMain([eventsPath, candidate, '--json', '-', '--threshold', '0.5', ...turnOnArgs, ...extra], fake.io);
  return { json: JSON.parse(fake.stdout()), text: fake.stderr() };
}

beforeAll(async () => {
  expect(await generateMain(['--events', '120', '--pileup', '40', '--seed', '7', '--out', eventsPath], fakeIo().io)).toBe(0);
});

describe('cluster --emulate window', () => {
  it('writes a jets file whose header names the window finder and its settings', async () => {
    const candidate = await openCandidate(await windowCandidate('jets'));
    await candidate.events.return(undefined as never);
    expect(candidate.header?.settings?.engine).toBe('window-9-5');
    expect(candidate.header?.label).toContain('window finder 9x9 towers, seed et >= 5 GeV');
  });

  it('rejects an even window as bad usage', async () => {
    await expect(clusterMain([eventsPath, '--emulate', 'window:8:5', '--out', join(dir, 'even.jets')], fakeIo().io)).rejects.toThrow(UsageError);
  });
});

describe('compare --turn-on', () => {
  it('gives one curve per threshold, then the n-th jet, then HT, in the JSON contract', async () => {
    const { json } = await compareJson(await windowCandidate('jets'));
    expect(json.turnOn.map((c: { observable: string; threshold: number; jet?: number }) => [c.observable, c.threshold, c.jet])).toEqual(
      [['jet1', 40, undefined], ['jet1', 60, undefined], ['jetN', 40, 2], ['jetN', 60, 2], ['ht', 120, undefined]]);
    for (const curve of json.turnOn) {
      expect(curve.binWidth).toBe(5);
      // every event valid on both sides counts once
      expect(curve.bins.reduce((sum: number, b: { events: number }) => sum + b.events, 0)).toBe(json.events.compared);
    }
  });

  it('rises from low to high reference pt for the window finder against anti-kt', async () => {
    const { json } = await compareJson(await windowCandidate('jets'));
    const curve = json.turnOn[0];
    expect(curve.bins[0].efficiency).toBeLessThan(0.5);
    expect(curve.bins[curve.bins.length - 1].efficiency).toBe(1);
    expect(curve.x50).not.toBeNull();
  });

  it('prints a compact table per curve in the text report', async () => {
    const { text } = await compareJson(await windowCandidate('jets'));
    expect(text).toContain('turn-on, leading jet >= 40 GeV');
    expect(text).toContain('turn-on, jet 2 >= 40 GeV');
    expect(text).toContain('turn-on, HT >= 120 GeV');
  });

  it('gives the same curves from JSON lines and from CSV as from the jets file', async () => {
    const fromJets = (await compareJson(await windowCandidate('jets'))).json.turnOn;
    const jsonl = await windowCandidate('jsonl');
    expect((await compareJson(jsonl)).json.turnOn).toEqual(fromJets);
    const rows = ['event,pt,y,phi'];
    for (const line of readFileSync(jsonl, 'utf8').trim().split('\n')) {
      const { event, jets } = JSON.parse(line) as { event: number; jets: { pt: number; y: number; phi: number }[] };
      for (const jet of jets) rows.push(`${event},${jet.pt},${jet.y},${jet.phi}`);
    }
    const csv = join(dir, 'window.csv');
    writeFileSync(csv, rows.join('\n') + '\n');
    expect((await compareJson(csv)).json.turnOn).toEqual(fromJets);
  });
});
