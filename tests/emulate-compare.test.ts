// Precision emulation end to end: `jetlag cluster --emulate` writes a candidate that
// `jetlag compare` reads back, and the loss shows where it should. Events come from the toy
// generator (invented data).

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { main as generateMain } from '../host/cli/commands/generate.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('emulate');
const eventsPath = join(dir, 'events.pb');

async function emulateAndCompare(mode: string, format: 'jets' | 'jsonl') {
  const candidate = join(dir, `${mode.replace(':', '-')}.${format}`);
  const clusterCode = await clusterMain([eventsPath, '--emulate', mode, '--threshold', '0.5', '--ptmin', '20', '--format', format, '--out', candidate, '--quiet', '--force'], fakeIo().io); // tests repeat a mode
  expect(clusterCode).toBe(0);
  const json = join(dir, `${mode.replace(':', '-')}-${format}.json`);
  const extra = format === 'jsonl' ? ['--threshold', '0.5', '--ptmin', '20'] : [];
  const code = await compareMain([eventsPath, candidate, '--json', json, '--force', ...extra], fakeIo().io);
  return { code, report: JSON.parse(readFileSync(json, 'utf8')) };
}

beforeAll(async () => {
  expect(await generateMain(['--events', '60', '--pileup', '60', '--seed', '3', '--out', eventsPath], fakeIo().io)).toBe(0);
});

describe('cluster --emulate, then compare', () => {
  it('f32 keeps every event within the default tolerances', async () => {
    const { code, report } = await emulateAndCompare('f32', 'jets');
    expect(code).toBe(0);
    expect(report.candidate.engine).toBe('emulate-f32');
    expect(report.events.agreeingFraction).toBe(1);
  });

  it('f32 moves pt by about single-precision rounding, far below the tolerance', async () => {
    const { report } = await emulateAndCompare('f32', 'jets');
    expect(report.response.rms).toBeGreaterThan(0);
    expect(report.response.rms).toBeLessThan(1e-5);
  });

  it('fixed:0.25 fails the default tolerances and says by how much', async () => {
    const { code, report } = await emulateAndCompare('fixed:0.25', 'jets');
    expect(code).toBe(1);
    expect(report.candidate.engine).toBe('emulate-fixed-0.25');
    expect(report.events.agreeingFraction).toBeLessThan(0.999);
    expect(report.response.rms).toBeGreaterThan(1e-3);
    expect(report.worstEvents.length).toBeGreaterThan(0);
  });

  it('the JSON lines of the same emulation give the same report as its jets file', async () => {
    const fromJets = await emulateAndCompare('fixed:0.25', 'jets');
    const fromLines = await emulateAndCompare('fixed:0.25', 'jsonl');
    expect(fromLines.report.events).toEqual(fromJets.report.events);
    expect(fromLines.report.response).toEqual(fromJets.report.response);
  });
});
