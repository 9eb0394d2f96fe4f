// jetlag compare on files: planted faults in a candidate are caught and named, an identical
// candidate passes with 100 % agreement, hand-made CSV and JSON-line candidates go through the
// same path, and broken or mismatched inputs are named without a crash. Events come from the
// toy generator (invented data).

import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { InputError, UsageError } from '../host/errors.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { generateEvents } from '../host/generator/generate.js';
import { JetsFileWriter } from '../host/output/jets-writer.js';
import { formatErrorLine, formatJetsLine } from '../host/formats/jets-jsonl.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { deltaR } from '../host/validate/tolerance-compare.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type ClusterSettings, type Grid, type JetSet } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('compare');
let fileNumber = 0;
const temp = (name: string) => join(dir, `${fileNumber++}-${name}`);

const EVENT_COUNT = 40;
const PT_MIN = 20;
const settings: ClusterSettings = { ...DEFAULT_SETTINGS, ptMin: 5, threshold: 0.2 };
let eventsPath = '';
let referenceJets: JetSet[] = [];

async function compare(...argv: string[]) {
  const fake = fakeIo();
  // as cli.ts does: bad usage and unreadable input are one line on stderr and exit 2
  let code: number;
  try {
    code = await compareMain(argv, fake.io);
  } catch (error) {
    if (!(error instanceof InputError) && !(error instanceof UsageError)) throw error;
    fake.io.stderr.write(`jetlag: ${error.message}\n`);
    code = 2;
  }
  return { code, stdout: fake.stdout(), stderr: fake.stderr() };
}

/** compare with a JSON report, returned parsed */
async function compareJson(candidate: string, ...extra: string[]) {
  const json = temp('report.json');
  const result = await compare(eventsPath, candidate, '--ptmin', String(PT_MIN), '--json', json, ...extra);
  return { ...result, report: JSON.parse(readFileSync(json, 'utf8')) };
}

function copyJets(jets: JetSet): JetSet {
  return {
    count: jets.count, px: jets.px.slice(), py: jets.py.slice(), pz: jets.pz.slice(), energy: jets.energy.slice(),
    pt: jets.pt.slice(), rapidity: jets.rapidity.slice(), phi: jets.phi.slice(), mass: jets.mass.slice(),
    towerCount: jets.towerCount.slice(), towerStart: jets.towerStart.slice(), towers: jets.towers.slice(),
  };
}

/** the jet set with jet `drop` taken out (no constituent lists) */
function withoutJet(jets: JetSet, drop: number): JetSet {
  const keep = <T extends Float64Array | Int32Array>(a: T) => a.filter((_, k) => k !== drop) as T;
  return {
    count: jets.count - 1, px: keep(jets.px), py: keep(jets.py), pz: keep(jets.pz), energy: keep(jets.energy),
    pt: keep(jets.pt), rapidity: keep(jets.rapidity), phi: keep(jets.phi), mass: keep(jets.mass),
    towerCount: keep(jets.towerCount), towerStart: new Int32Array(jets.count - 1), towers: new Int32Array(0),
  };
}

/** the jet set with one more massless jet at the end (no constituent lists) */
function withJet(jets: JetSet, pt: number, y: number, phi: number): JetSet {
  const add = (a: Float64Array, v: number) => Float64Array.from([...a, v]);
  return {
    count: jets.count + 1, px: add(jets.px, pt * Math.cos(phi)), py: add(jets.py, pt * Math.sin(phi)),
    pz: add(jets.pz, pt * Math.sinh(y)), energy: add(jets.energy, pt * Math.cosh(y)), pt: add(jets.pt, pt),
    rapidity: add(jets.rapidity, y), phi: add(jets.phi, phi), mass: add(jets.mass, 0),
    towerCount: Int32Array.from([...jets.towerCount, 1]), towerStart: new Int32Array(jets.count + 1), towers: new Int32Array(0),
  };
}

/**
 * A jets-file candidate: the reference's jets with `edit` applied per event; an edit returning
 * null leaves the event's record out.
 */
async function jetsCandidate(
  edit: (event: number, jets: JetSet) => JetSet | null = (_e, jets) => jets,
  options: { grid?: Grid; settings?: ClusterSettings; order?: number[] } = {},
): Promise<string> {
  const path = temp('candidate.jets');
  const writer = await JetsFileWriter.open(path, options.grid ?? DEFAULT_GRID, { ...(options.settings ?? settings), engine: 'planted-faults' });
  const order = options.order ?? referenceJets.map((_, event) => event);
  for (const event of order) {
    const jets = edit(event, copyJets(referenceJets[event]));
    if (jets !== null) await writer.writeJets({ event, jets });
  }
  await writer.close();
  return path;
}

/** the first event with a jet above PT_MIN for which `test` holds, and that jet */
function findJet(test: (jets: JetSet, k: number) => boolean): { event: number; jet: number } {
  for (let event = 0; event < referenceJets.length; event++) {
    const jets = referenceJets[event];
    for (let k = 0; k < jets.count; k++) if (jets.pt[k] >= PT_MIN && test(jets, k)) return { event, jet: k };
  }
  throw new Error('no such jet in the generated events');
}

function csvOf(events: JetSet[], skip: (event: number, jet: number) => boolean = () => false): string {
  const rows = ['event,pt,y,phi,m'];
  events.forEach((jets, event) => {
    for (let k = 0; k < jets.count; k++) {
      if (!skip(event, k)) rows.push(`${event},${jets.pt[k]},${jets.rapidity[k]},${jets.phi[k]},${jets.mass[k]}`);
    }
  });
  return rows.join('\n') + '\n';
}

beforeAll(async () => {
  eventsPath = temp('events.pb');
  const writer = await EventFileWriter.open(eventsPath, { grid: DEFAULT_GRID, producer: 'compare test', label: 'invented events' });
  const reference = new ReferenceClusterer(DEFAULT_GRID, settings);
  for (const event of generateEvents(DEFAULT_GRID, { events: EVENT_COUNT, pileup: 30, seed: 21 })) {
    await writer.writeEvent({ event: event.event, towerIndex: event.towerIndex, towerEt: event.towerEt });
    referenceJets.push(reference.cluster(event.towerIndex, event.towerEt));
  }
  await writer.close();
  referenceJets = referenceJets.map(copyJets);
});

describe('a candidate that is the reference itself', () => {
  it('agrees on every event and exits 0', async () => {
    const { code, report } = await compareJson(await jetsCandidate());
    expect(code).toBe(0);
    expect(report.events.agreeing).toBe(EVENT_COUNT);
    expect(report.events.agreeingFraction).toBe(1);
  });

  it('has jets above ptMin to compare, each matched at ratio 1 and distance 0', async () => {
    const { report } = await compareJson(await jetsCandidate());
    expect(report.jets.referenceAbove).toBeGreaterThan(EVENT_COUNT);
    expect(report.jets.efficiency).toBe(1);
    expect(report.response.max).toBe(1);
    expect(report.deltaR.max).toBe(0);
  });

  it('prints PASS and the agreeing events on stdout', async () => {
    const { stdout } = await compare(eventsPath, await jetsCandidate(), '--ptmin', String(PT_MIN));
    expect(stdout).toContain(`${EVENT_COUNT} agree (100.00 %)`);
    expect(stdout).toMatch(/^PASS/m);
  });
});

describe('planted faults', () => {
  it('a dropped jet fails the event, lowers the efficiency and exits 1', async () => {
    const { event, jet } = findJet(() => true);
    const { code, report } = await compareJson(await jetsCandidate((e, jets) => (e === event ? withoutJet(jets, jet) : jets)));
    expect(code).toBe(1);
    expect(report.events.disagreeing).toBe(1);
    expect(report.jets.matched).toBe(report.jets.referenceAbove - 1);
    expect(report.worstEvents[0].event).toBe(event);
    expect(report.worstEvents[0].jets[0].status).toBe('unmatched');
  });

  it('a pt shifted by 1 % fails the event with the shift in the report', async () => {
    const { event, jet } = findJet(() => true);
    const { code, report } = await compareJson(await jetsCandidate((e, jets) => {
      if (e === event) jets.pt[jet] *= 1.01;
      return jets;
    }));
    expect(code).toBe(1);
    expect(report.events.disagreeing).toBe(1);
    expect(report.worstEvents[0].jets[0].ptRatio).toBeCloseTo(1.01, 10);
    expect(report.response.max).toBeCloseTo(1.01, 10);
  });

  it('a jet with φ mirrored to 2π - φ fails the event', async () => {
    const { event, jet } = findJet((jets, k) => deltaR(0, jets.phi[k], 0, 2 * Math.PI - jets.phi[k]) > 0.5);
    const { code, report } = await compareJson(await jetsCandidate((e, jets) => {
      if (e === event) jets.phi[jet] = 2 * Math.PI - jets.phi[jet];
      return jets;
    }));
    expect(code).toBe(1);
    expect(report.events.disagreeing).toBe(1);
    expect(report.jets.matched).toBe(report.jets.referenceAbove - 1);
    expect(report.jets.extraCandidates).toBe(1);
  });

  it('an extra soft jet above ptMin, away from every reference jet, fails the event as a fake', async () => {
    const event = 0;
    const jets = referenceJets[event];
    let spot = { y: 0, phi: 0 };
    search: for (let y = -2; y <= 2; y += 0.2) {
      for (let phi = 0.1; phi < 6.2; phi += 0.2) {
        let clear = true;
        for (let k = 0; k < jets.count; k++) if (deltaR(y, phi, jets.rapidity[k], jets.phi[k]) < 0.3) clear = false;
        if (clear) { spot = { y, phi }; break search; }
      }
    }
    const { code, report } = await compareJson(await jetsCandidate((e, j) => (e === event ? withJet(j, PT_MIN + 0.5, spot.y, spot.phi) : j)));
    expect(code).toBe(1);
    expect(report.events.disagreeing).toBe(1);
    expect(report.jets.extraCandidates).toBe(1);
    expect(report.jets.fakeRate).toBeCloseTo(1 / report.jets.candidateAbove, 12);
  });

  it('a missing event record is reported as missing and counted as disagreeing', async () => {
    const { code, report, stdout } = await compareJson(await jetsCandidate((e, jets) => (e === 7 ? null : jets)));
    expect(code).toBe(1);
    expect(report.events.missingFromCandidate).toBe(1);
    expect(report.events.disagreeing).toBe(1);
    expect(report.problems['missing events'].examples[0]).toMatch(/^event 7: no record/);
    expect(stdout).toContain('missing events: 1');
  });

  it('one bad event in 40 passes a --require of 0.9', async () => {
    const { code } = await compareJson(await jetsCandidate((e, jets) => (e === 7 ? null : jets)), '--require', '0.9');
    expect(code).toBe(0);
  });
});

describe('hand-made candidates', () => {
  it('CSV written from the reference jets passes with 100 % agreement', async () => {
    const path = temp('candidate.csv');
    writeFileSync(path, csvOf(referenceJets));
    const { code, report } = await compareJson(path, '--threshold', '0.2', '--ptmin', '5');
    expect(code).toBe(0);
    expect(report.candidate.format).toBe('csv');
    expect(report.events.agreeing).toBe(EVENT_COUNT);
  });

  it('CSV, which carries no settings, gets a note naming the settings the reference used', async () => {
    const path = temp('candidate.csv');
    writeFileSync(path, csvOf(referenceJets));
    const { stderr } = await compareJson(path, '--threshold', '0.2');
    expect(stderr).toContain('the candidate (csv) names no algorithm settings; the reference uses anti-kt R=0.4 E-scheme ptmin=20 threshold=0.2');
  });

  it('CSV without a jet above ptMin fails that event', async () => {
    const { event, jet } = findJet(() => true);
    const path = temp('candidate.csv');
    writeFileSync(path, csvOf(referenceJets, (e, k) => e === event && k === jet));
    const { code, report } = await compareJson(path, '--threshold', '0.2', '--ptmin', String(PT_MIN));
    expect(code).toBe(1);
    expect(report.events.disagreeing).toBe(1);
  });

  it('CSV: an event with no rows has no jets rather than being missing', async () => {
    const path = temp('candidate.csv');
    writeFileSync(path, csvOf(referenceJets, (e) => e === 4));
    const { report } = await compareJson(path, '--threshold', '0.2', '--ptmin', String(PT_MIN));
    expect(report.events.missingFromCandidate).toBe(0);
    expect(report.events.disagreeing).toBe(referenceJets[4].pt[0] >= PT_MIN ? 1 : 0);
  });

  it('CSV with a bad number makes that event invalid in the candidate, named with its byte offset', async () => {
    const text = csvOf(referenceJets).replace(/\n3,[^,\n]*,/, '\n3,twelve,');
    const path = temp('candidate.csv');
    writeFileSync(path, text);
    const { report } = await compareJson(path, '--threshold', '0.2', '--ptmin', String(PT_MIN));
    const offset = text.indexOf('\n3,twelve,') + 1;
    const line = text.slice(0, offset).split('\n').length;
    expect(report.events.invalidInCandidate).toBe(1);
    expect(report.problems['events invalid in the candidate only'].examples[0]).toContain(`row at line ${line}, byte ${offset}: bad pt "twelve"`);
    expect(report.events.compared).toBe(EVENT_COUNT - 1);
  });

  it('CSV without its header line is unreadable input (exit 2) naming file and byte 0', async () => {
    const path = temp('candidate.csv');
    writeFileSync(path, '0,50,0.1,1\n');
    const { code, stderr } = await compare(eventsPath, path);
    expect(code).toBe(2);
    expect(stderr).toContain(`${path}, line 1, byte 0: missing header`);
  });

  it('JSON lines as the cluster command writes them pass with 100 % agreement', async () => {
    const path = temp('candidate.jsonl');
    writeFileSync(path, referenceJets.map((jets, event) => formatJetsLine(event, jets)).join('\n') + '\n');
    const { code, report } = await compareJson(path, '--threshold', '0.2', '--ptmin', '5');
    expect(code).toBe(0);
    expect(report.candidate.format).toBe('jsonl');
    expect(report.events.agreeing).toBe(EVENT_COUNT);
  });

  it('JSON lines: an error line is an event invalid in the candidate, an absent line a missing event', async () => {
    const lines = referenceJets.map((jets, event) => (event === 2 ? formatErrorLine(event, 'overflow') : formatJetsLine(event, jets)));
    lines.splice(5, 1);
    const path = temp('candidate.jsonl');
    writeFileSync(path, lines.join('\n') + '\n');
    const { report } = await compareJson(path, '--threshold', '0.2', '--ptmin', '5');
    expect(report.events.invalidInCandidate).toBe(1);
    expect(report.events.missingFromCandidate).toBe(1);
    expect(report.problems['events invalid in the candidate only'].examples[0]).toContain('overflow');
  });
});

describe('mismatched or disordered candidates are named, not a crash', () => {
  it('a repeated event record is named and the first one is used', async () => {
    const order = referenceJets.map((_, event) => event);
    order.splice(10, 0, 9);
    const { report } = await compareJson(await jetsCandidate(undefined, { order }));
    expect(report.problems['duplicated candidate events'].examples[0]).toMatch(/^event 9 again at byte \d+/);
    expect(report.events.agreeing).toBe(EVENT_COUNT);
  });

  it('an event out of order is named and left out, so it shows as missing', async () => {
    const order = referenceJets.map((_, event) => event);
    order.splice(12, 1);
    order.splice(20, 0, 12);
    const { report } = await compareJson(await jetsCandidate(undefined, { order }));
    expect(report.problems['candidate events out of order'].examples[0]).toMatch(/^event 12 at byte \d+ comes after event 20/);
    expect(report.events.missingFromCandidate).toBe(1);
  });

  it('a candidate event that EVENTS does not have is named', async () => {
    const path = temp('candidate.csv');
    writeFileSync(path, csvOf(referenceJets) + `${EVENT_COUNT + 3},30,0,1,0\n`);
    const { report } = await compareJson(path, '--threshold', '0.2');
    expect(report.problems['candidate events not in EVENTS'].examples[0]).toContain(`event ${EVENT_COUNT + 3}`);
  });

  it('a different grid in the candidate header is unreadable input naming both grids', async () => {
    const grid = { ...DEFAULT_GRID, etaBins: 40 };
    const { code, stderr } = await compare(eventsPath, await jetsCandidate(undefined, { grid }));
    expect(code).toBe(2);
    expect(stderr).toContain('differs from the events\' grid');
    expect(stderr).toContain('in 40 bins');
  });

  it('a different algorithm in the header is used unless options are given', async () => {
    const candidate = await jetsCandidate(undefined, { settings: { ...settings, p: 1 } });
    const headerSettings = await compareJson(candidate);
    expect(headerSettings.report.settings.p).toBe(1);
    expect(headerSettings.code).toBe(1);
    const overridden = await compareJson(candidate, '--algorithm', 'anti-kt');
    expect(overridden.report.settings.p).toBe(-1);
    expect(overridden.code).toBe(0);
  });

  it('an option that differs from the candidate header is named on stderr', async () => {
    const candidate = await jetsCandidate(undefined, { settings: { ...settings, p: 1 } });
    const { stderr } = await compareJson(candidate, '--algorithm', 'anti-kt');
    expect(stderr).toContain("--p / --algorithm -1 differs from the candidate header's p 1 (engine planted-faults)");
  });

  it('grid options with an event file, which carries its own grid, are bad usage', async () => {
    const { code, stderr } = await compare(eventsPath, await jetsCandidate(), '--eta-bins', '40');
    expect(code).toBe(2);
    expect(stderr).toContain('carries its own grid');
  });

  it('an event file given as the candidate is bad input', async () => {
    const { code, stderr } = await compare(eventsPath, eventsPath);
    expect(code).toBe(2);
    expect(stderr).toContain('this is an event file');
  });

  it('a truncated candidate keeps the report of the events before it and exits 2', async () => {
    const whole = readFileSync(await jetsCandidate());
    const path = temp('truncated.jets');
    writeFileSync(path, whole.subarray(0, Math.floor(whole.length * 0.6)));
    const json = temp('report.json');
    const { code, stderr } = await compare(eventsPath, path, '--json', json);
    const report = JSON.parse(readFileSync(json, 'utf8'));
    expect(code).toBe(2);
    expect(stderr).toMatch(/truncated record/);
    expect(report.events.compared + report.events.missingFromCandidate).toBe(EVENT_COUNT);
    expect(report.events.compared).toBeGreaterThan(10);
  });
});

describe('the report', () => {
  it('is the same whether the reference or the engine computes the reference jets', async () => {
    const candidate = await jetsCandidate((e, jets) => {
      if (e % 3 === 0) jets.pt[0] *= 1.002;
      return jets;
    });
    const byReference = await compareJson(candidate);
    const byEngine = await compareJson(candidate, '--engine', 'wasm');
    expect(byEngine.report.referenceJetsBy).toBe('wasm');
    expect({ ...byEngine.report, referenceJetsBy: null }).toEqual({ ...byReference.report, referenceJetsBy: null });
    expect(byReference.report.events.disagreeing).toBeGreaterThan(0);
  });

  it('bins reference jets in pt and |η| so that the bins add up to the total', async () => {
    const { report } = await compareJson(await jetsCandidate());
    const sum = (bins: { referenceJets: number }[]) => bins.reduce((s, b) => s + b.referenceJets, 0);
    expect(sum(report.byReferencePt)).toBe(report.jets.referenceAbove);
    expect(sum(report.byAbsEta)).toBe(report.jets.referenceAbove);
  });

  it('counts add up: valid events are compared, missing or invalid in the candidate', async () => {
    const { report } = await compareJson(await jetsCandidate((e, jets) => (e % 9 === 0 ? null : jets)));
    const e = report.events;
    expect(e.compared + e.missingFromCandidate + e.invalidInCandidate).toBe(e.valid);
    expect(e.valid + e.invalidInEvents).toBe(e.read);
    expect(e.agreeing + e.disagreeing).toBe(e.valid);
  });
});
