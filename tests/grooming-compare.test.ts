// `jetlag compare` with groomed candidates (clustering-spec.md sections 7 and 12): beside the
// plain jets, the trimmed and soft-dropped pt and mass of matched pairs, their response and
// agreement, for jets files (the header names the grooming) and JSON lines (--trim/--softdrop).

import { join } from 'node:path';
import { writeFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { main as cluster } from '../host/cli/commands/cluster.js';
import { main as compare } from '../host/cli/commands/compare.js';
import { main as generate } from '../host/cli/commands/generate.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('grooming-compare');
const events = join(dir, 'events.pb');
const groomingArgs = ['--trim', '0.2:0.05', '--softdrop', '0.1:0'];
const settingsArgs = ['--radius', '1.0', '--ptmin', '20'];

interface GroomedEntry { groomer: string; pairs: number; agreeing: number; massResponse: { mean: number | null } }

async function compareJson(candidate: string, extra: string[] = []): Promise<{ groomed: GroomedEntry[]; jets: { matched: number }; text: string }> {
  const io = fakeIo();
  await compare([events, candidate, '--json', '-', ...extra], io.io);
  return { ...JSON.parse(io.stdout()), text: io.stderr() };
}

describe('jetlag compare of groomed jets', () => {
  it('finds every groomed pair agreeing with response 1 for the engine\'s jets file', async () => {
    expect(await generate(['--events', '4', '--pileup', '30', '--seed', '7', '--out', events, '-q'], fakeIo().io)).toBe(0);
    const jetsPath = join(dir, 'jets.pb');
    expect(await cluster([events, ...settingsArgs, ...groomingArgs, '-q', '--out', jetsPath], fakeIo().io)).toBe(0);
    const report = await compareJson(jetsPath);
    expect(report.groomed.map((g) => g.groomer)).toEqual(['trim', 'softdrop']);
    for (const g of report.groomed) {
      expect(g.pairs).toBe(report.jets.matched);
      expect(g.agreeing).toBe(g.pairs);
      expect(g.massResponse.mean).toBe(1);
    }
    expect(report.text).toContain('groomed jets (matched pairs above ptMin');
  });

  it('counts a JSON lines candidate whose trimmed mass is 1 % high as disagreeing, the soft-dropped as agreeing', async () => {
    const io = fakeIo();
    expect(await cluster([events, ...settingsArgs, ...groomingArgs, '-q', '--format', 'jsonl', '--no-towers'], io.io)).toBe(0);
    const lines = io.stdout().split('\n').filter((line) => line !== '').map((line) => {
      const parsed = JSON.parse(line);
      for (const jet of parsed.jets) jet.trim.m *= 1.01;
      return JSON.stringify(parsed);
    });
    const candidate = join(dir, 'shifted.jsonl');
    writeFileSync(candidate, lines.join('\n') + '\n');
    const report = await compareJson(candidate, [...settingsArgs, ...groomingArgs]);
    const trim = report.groomed.find((g) => g.groomer === 'trim')!;
    const softDrop = report.groomed.find((g) => g.groomer === 'softdrop')!;
    expect(trim.pairs).toBeGreaterThan(0);
    // a 1 % mass shift is above the default ptTol 1e-3 (times pt >= m) for every jet with mass
    expect(trim.agreeing).toBeLessThan(trim.pairs);
    expect(trim.massResponse.mean).toBeCloseTo(1.01, 12);
    expect(softDrop.agreeing).toBe(softDrop.pairs);
  });

  it('reports no groomed figures when the candidate carries none', async () => {
    const plain = join(dir, 'plain.pb');
    expect(await cluster([events, ...settingsArgs, '-q', '--out', plain], fakeIo().io)).toBe(0);
    expect((await compareJson(plain)).groomed).toEqual([]);
  });
});
