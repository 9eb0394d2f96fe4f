// The pileup options on the command line (--areas, --ghost-et, --rho, --subtract, --softkiller):
// they reach the clusterer, its jets go out with their pileup values, and bad settings are one
// usage line. Events come from the toy generator (invented data, fictional Halden ring).

import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { main as generateMain } from '../host/cli/commands/generate.js';
import { main as runMain } from '../host/cli/commands/run.js';
import { UsageError } from '../host/errors.js';
import { runEvents } from '../host/pipeline/run.js';
import { formatReport } from '../host/measure/report.js';
import { openRecordFile } from '../host/input/event-source.js';
import { EventTowerReader } from '../host/input/event-towers.js';
import { decodeJetsRecord } from '../host/formats/jets-codec.js';
import { PileupReferenceClusterer } from '../host/clustering/pileup/chain.js';
import { firstJetDifference } from '../host/validate/bit-exact.js';
import { firstPileupDifference } from '../host/validate/pileup-bit-exact.js';
import { DEFAULT_SETTINGS, type PileupSettings } from '../host/types.js';
import { WindowFinder } from '../host/clustering/window-finder.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('pileup-cli');
const eventsPath = join(dir, 'events.pb');

beforeAll(async () => {
  expect(await generateMain(['--events', '4', '--pileup', '60', '--seed', '3', '--out', eventsPath], fakeIo().io)).toBe(0);
});

/** every event's jets from a jets file, decoded with their pileup values */
async function readJets(path: string) {
  const source = await openRecordFile(path);
  const decoded = [];
  for await (const record of source.records) decoded.push(decodeJetsRecord(record.bytes, { pileup: source.header.settings?.pileup !== undefined }));
  return { header: source.header, decoded };
}

async function clusterWith(engine: string, extra: string[]): Promise<string> {
  const out = join(dir, `jets-${engine}-${extra.join('').replace(/[^a-z0-9]/gi, '')}.pb`);
  const fake = fakeIo();
  const code = await clusterMain([eventsPath, '--engine', engine, '--out', out, '--force', '--quiet', ...extra], fake.io);
  expect(fake.stderr()).toBe('');
  expect(code).toBe(0);
  return out;
}

describe('cluster with pileup options', () => {
  const options = ['--areas', '--rho', 'kt:0.5', '--subtract', '--softkiller', '4:4', '--threshold', '0.1'];
  const pileup: PileupSettings = { areas: true, ghostEt: 1e-100, rho: { kind: 'kt', radius: 0.5 }, subtract: true, softKiller: { etaRows: 4, phiColumns: 4 } };

  it('writes the settings in the header and jets with areas and ptRaw', async () => {
    const { header, decoded } = await readJets(await clusterWith('wasm', options));
    expect(header.settings?.pileup).toEqual(pileup);
    const jets = decoded.flatMap((d) => Array.from({ length: d.jets.count }, (_, k) => ({ area: d.jets.pileup!.area[k], ptRaw: d.jets.pileup!.ptRaw[k], pt: d.jets.pt[k] })));
    expect(jets.length).toBeGreaterThan(0);
    for (const jet of jets) {
      expect(jet.area).toBeGreaterThan(0);
      expect(jet.ptRaw).toBeGreaterThan(jet.pt); // ρ > 0 on pileup events: subtraction lowers every jet
    }
    expect(decoded.every((d) => d.jets.pileup!.rho > 0 && d.jets.pileup!.killed > 0)).toBe(true);
  });

  it('gives the reference chain\'s bits, through the engine and through --engine reference', async () => {
    const reference = new PileupReferenceClusterer((await openRecordFile(eventsPath)).header.grid, { ...DEFAULT_SETTINGS, threshold: 0.1 }, pileup);
    const source = await openRecordFile(eventsPath);
    const reader = new EventTowerReader(source.header.grid);
    const expected = [];
    for await (const record of source.records) {
      const towers = reader.read(record.bytes);
      if (!towers.ok) throw new Error(towers.problem);
      expected.push(reference.cluster(towers.towerIndex, towers.towerEt));
    }
    for (const engine of ['wasm', 'reference']) {
      const { decoded } = await readJets(await clusterWith(engine, options));
      expect(decoded.length).toBe(expected.length);
      for (let e = 0; e < expected.length; e++) {
        expect(firstJetDifference(decoded[e].jets, expected[e])).toBeNull();
        expect(firstPileupDifference(decoded[e].jets, expected[e])).toBeNull();
      }
    }
  }, 120_000); // the reference clusters every event's full ghost grid, about a second an event

  it('writes JSON lines with the pileup keys', async () => {
    const fake = fakeIo();
    expect(await clusterMain([eventsPath, '--format', 'jsonl', '--areas', '--quiet'], fake.io)).toBe(0);
    const first = JSON.parse(fake.stdout().split('\n')[0]);
    expect(first.rho).toBe(0); // no estimator asked for (spec section 9 reading: ρ = 0)
    expect(first.jets[0].ghosts).toBeGreaterThan(0);
    expect(first.jets[0].ptRaw).toBe(first.jets[0].pt);
  });

  it('leaves jets without pileup steps as they were: no pileup values, no header field', async () => {
    const { header, decoded } = await readJets(await clusterWith('wasm', ['--ghost-et', '1e-90']));
    expect(header.settings?.pileup).toBeUndefined();
    expect(decoded.every((d) => d.jets.pileup === undefined)).toBe(true);
  });
});

describe('the window finder after SoftKiller (spec section 11)', () => {
  it('clusters the towers at or above the event\'s etCut, and reports etCut and killed', async () => {
    const { header, decoded } = await readJets(await clusterWith('wasm', ['--emulate', 'window:9:5', '--softkiller', '5:5']));
    expect(header.settings?.engine).toBe('window-9-5');
    const source = await openRecordFile(eventsPath);
    const reader = new EventTowerReader(source.header.grid);
    const window = new WindowFinder(source.header.grid, DEFAULT_SETTINGS, { windowTowers: 9, seedEt: 5 });
    let e = 0;
    for await (const record of source.records) {
      const towers = reader.read(record.bytes);
      if (!towers.ok) throw new Error(towers.problem);
      const { etCut, killed } = decoded[e].jets.pileup!;
      expect(etCut).toBeGreaterThan(0);
      // the towers kept by hand: positive et (the threshold, 0) and not below the cut (section 10)
      const keep = Array.from(towers.towerEt, (et) => et > 0 && et >= etCut);
      const index = towers.towerIndex.filter((_, k) => keep[k]);
      const et = towers.towerEt.filter((_, k) => keep[k]);
      expect(killed).toBe(towers.towerEt.filter((x) => x > 0).length - et.length);
      expect(firstJetDifference(decoded[e].jets, window.cluster(index, et))).toBeNull();
      e++;
    }
  });
});

// workers run the compiled dist/ (npm run build:host)
describe('run with pileup options', () => {
  it('checks the pileup values bit for bit and reports the chain\'s stages that ran', async () => {
    const pileup: PileupSettings = { areas: true, ghostEt: 1e-100, rho: { kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } }, subtract: true, softKiller: null };
    const out = join(dir, 'run-jets.pb');
    const summary = await runEvents({ input: eventsPath, workers: 1, batch: 2, check: { mode: 'all', fraction: 1, seed: 1 }, pileup, out, force: true });
    expect([summary.check.checked, summary.check.agreeing]).toEqual([4, 4]);
    expect(summary.configuration.pileup).toEqual(pileup);
    expect(Object.keys(summary.latency.pileupStages ?? {})).toEqual(['clustering', 'rho-patches', 'subtraction']);
    expect(formatReport(summary)).toMatch(/\n {4}ρ from patches +4 /);
    const { header, decoded } = await readJets(out);
    expect(header.settings?.pileup).toEqual(pileup);
    expect(decoded.every((d) => d.jets.pileup!.rho > 0)).toBe(true);
  }, 120_000);

  it('counts an event whose rho differs by one ulp as disagreeing, named by the field', async () => {
    const faultWorker = join(__dirname, '..', 'dist', 'tests', 'support', 'fault-worker.js');
    const pileup: PileupSettings = { areas: false, ghostEt: 1e-100, rho: { kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } }, subtract: false, softKiller: null };
    process.env.JETLAG_TEST_PERTURB_RHO = '2';
    try {
      const summary = await runEvents({ input: eventsPath, workers: 1, batch: 2, check: { mode: 'all', fraction: 1, seed: 1 }, pileup, workerFile: faultWorker });
      expect([summary.check.checked, summary.check.disagreeing]).toEqual([4, 1]);
      expect(summary.check.differences.map((d) => [d.event, d.field])).toEqual([[2, 'event.rho']]);
    } finally {
      delete process.env.JETLAG_TEST_PERTURB_RHO;
    }
  }, 60_000);

  it('reports no chain stages without pileup steps', async () => {
    const summary = await runEvents({ input: eventsPath, workers: 1, batch: 2, check: { mode: 'none', fraction: 0, seed: 1 } });
    expect(summary.latency.pileupStages).toBeUndefined();
    expect(summary.configuration.pileup).toBeUndefined();
  }, 60_000);
});

// a UsageError is the command line's exit 2 with its message as the one line (cli.ts reportError)
describe('bad pileup settings', () => {
  const mains: Record<string, (argv: string[], io: ReturnType<typeof fakeIo>['io']) => Promise<number>> = { cluster: clusterMain, run: runMain, compare: compareMain };
  const never = join(dir, 'never.pb');
  const cases: [string, () => string[], RegExp][] = [
    ['areas with |p| > 1', () => ['cluster', eventsPath, '--out', never, '--areas', '--p', '2'], /^jetlag cluster: --areas needs -1 <= p <= 1/],
    ['a ghost et outside its range', () => ['cluster', eventsPath, '--out', never, '--areas', '--ghost-et', '1e-20'], /^jetlag cluster: --ghost-et must lie in \[1e-120, 1e-60\]/],
    ['a patch size of 0', () => ['cluster', eventsPath, '--out', never, '--softkiller', '0:5'], /^jetlag cluster: --softkiller patch sizes must be 1\.\.50 towers in eta and 1\.\.64 in phi, got 0:5/],
    ['a patch larger than the grid', () => ['run', eventsPath, '--out', never, '--rho', 'patches:5:65'], /^jetlag run: --rho patches patch sizes must be 1\.\.50/],
    ['--subtract without areas', () => ['compare', eventsPath, plainJets, '--subtract'], /^jetlag compare: --subtract needs --areas/],
    ['an estimator that is not one', () => ['cluster', eventsPath, '--out', never, '--rho', 'median'], /^jetlag cluster: --rho must be patches:PE:PP or kt:RR/],
    ['areas with the window finder', () => ['cluster', eventsPath, '--out', never, '--emulate', 'window', '--areas'], /^jetlag cluster: the window finder takes no --areas/],
    ['ρ with the window finder in run', () => ['run', eventsPath, '--engine', 'window:9:5', '--rho', 'kt:0.4'], /^jetlag run: the window finder takes no --areas/],
  ];
  let plainJets = '';
  beforeAll(async () => {
    plainJets = await clusterWith('wasm', []);
  });
  for (const [what, argv, message] of cases) {
    it(`${what}: a usage error of one line`, async () => {
      const [command, ...rest] = argv();
      const error = await mains[command](rest, fakeIo().io).then(() => null, (thrown: unknown) => thrown);
      expect(error).toBeInstanceOf(UsageError);
      expect(`jetlag ${(error as Error).message}`).toMatch(message);
      expect((error as Error).message).not.toContain('\n');
    });
  }
});
