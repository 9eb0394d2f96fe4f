// `jetlag cluster --trim RSUB:FCUT --softdrop ZCUT:BETA` (clustering-spec.md section 12) as
// users meet it, in process: JSON lines carry a "trim" and a "softdrop" object per jet, the
// engine's lines equal the reference's, and bad settings are one usage line.

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as cluster } from '../host/cli/commands/cluster.js';
import { main as generate } from '../host/cli/commands/generate.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { makeClusterer, makeReferenceClusterer } from '../host/clustering/clusterers.js';
import { UsageError } from '../host/errors.js';
import { DEFAULT_SETTINGS } from '../host/types.js';

const dir = tempDirForSuite('grooming-cli');
const events = join(dir, 'events.pb');

async function clusterLines(extra: string[]): Promise<{ code: number; lines: string[]; stderr: string }> {
  const io = fakeIo();
  const code = await cluster([events, '--radius', '1.0', '--ptmin', '20', '--format', 'jsonl', '--no-towers', '-q', ...extra], io.io);
  return { code, lines: io.stdout().split('\n').filter((line) => line !== ''), stderr: io.stderr() };
}

describe('jetlag cluster with grooming', () => {
  it('writes trim and softdrop objects per jet, the engine\'s equal to the reference\'s', async () => {
    expect(await generate(['--events', '4', '--pileup', '30', '--seed', '16', '--out', events, '-q'], fakeIo().io)).toBe(0);
    const engine = await clusterLines(['--trim', '0.2:0.05', '--softdrop', '0.1:0']);
    const reference = await clusterLines(['--trim', '0.2:0.05', '--softdrop', '0.1:0', '--engine', 'reference']);
    expect(engine.code).toBe(0);
    expect(engine.lines).toEqual(reference.lines);
    const jets = engine.lines.flatMap((line) => JSON.parse(line).jets);
    expect(jets.length).toBeGreaterThan(0);
    for (const jet of jets) {
      expect(Object.keys(jet.trim)).toEqual(['pt', 'y', 'phi', 'm', 'px', 'py', 'pz', 'E', 'n', 'subjets']);
      expect(Object.keys(jet.softdrop)).toEqual(['pt', 'y', 'phi', 'm', 'px', 'py', 'pz', 'E', 'n', 'zg', 'Rg']);
      expect(jet.softdrop.n).toBeLessThanOrEqual(jet.n);
    }
  });

  it('refuses a setting it cannot read in one usage line (exit 2)', async () => {
    const io = fakeIo();
    await expect(cluster([events, '--softdrop', '0.1'], io.io)).rejects.toThrow('cluster: --softdrop needs ZCUT:BETA (e.g. 0.1:0), got "0.1"');
    await expect(cluster([events, '--trim', '0:0.05'], io.io)).rejects.toThrow('cluster: --trim needs a subjet radius RSUB in (0, 2], got 0');
  });

  it('refuses a grid beyond |eta| 10, where merged jets get infinite rapidities, for both engines', () => {
    // from |eta| of about 19 on, cosh and sinh of a tower's eta are one double (common practice:
    // calorimeters end near |eta| 5)
    const grid = { etaMin: -20, etaMax: 20, etaBins: 40, phiBins: 16 };
    const grooming = { trim: null, softDrop: { zCut: 0.1, beta: 0 } };
    const settings = { ...DEFAULT_SETTINGS, radius: 1.0 };
    const message = 'cluster: --trim and --softdrop need a grid within |eta| <= 10, got [-20, 20)';
    expect(() => makeClusterer('wasm', grid, settings, null, null, 'cluster', grooming)).toThrow(UsageError);
    expect(() => makeClusterer('wasm', grid, settings, null, null, 'cluster', grooming)).toThrow(message);
    expect(() => makeReferenceClusterer(grid, settings, null, 'cluster', grooming)).toThrow(message);
    expect(() => makeClusterer('wasm', { ...grid, etaMin: -10, etaMax: 10 }, settings, null, null, 'cluster', grooming)).not.toThrow();
  });
});
