// What goes into the HTML report: every text taken from an input is escaped, and a report of a
// long run stays small (the scatter thinned, histograms kept). Workers run from dist/.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main as runMain } from '../host/cli/commands/run.js';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { buildReport } from '../host/report/build-report.js';
import { compareView, runView } from '../host/report/report-data.js';
import { EventSample } from '../host/measure/event-sample.js';
import { LatencyRecorder } from '../host/measure/latency.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const HOSTILE = `<script>alert("x")</script>" onmouseover="steal()' &amp;`;
const dir = tempDirForSuite('report-content');
/* eslint-disable @typescript-eslint/no-explicit-any */
let runSummary: any;
let compareDocument: any;

beforeAll(async () => {
  const events = join(dir, 'events.jl');
  writeEventFile(events, toyEvents(20, 9, 10));
  const io = () => fakeIo().io;
  expect(await runMain([events, '--workers', '1', '--check', 'none', '-q', '--json', join(dir, 'run.json')], io())).toBe(0);
  runSummary = JSON.parse(readFileSync(join(dir, 'run.json'), 'utf8'));
  expect(await clusterMain([events, '--emulate', 'window', '--ptmin', '10', '--out', join(dir, 'window.jl')], io())).toBe(0);
  await compareMain([events, join(dir, 'window.jl'), '--ptmin', '10', '-q', '--json', join(dir, 'compare.json')], io());
  compareDocument = JSON.parse(readFileSync(join(dir, 'compare.json'), 'utf8'));
});

/** Every place the report shows an input's text, set to HOSTILE. */
function hostileRun(): any {
  const summary = structuredClone(runSummary);
  summary.configuration.file = `${HOSTILE}.jl`;
  summary.configuration.engine = HOSTILE;
  summary.configuration.input.label = HOSTILE;
  summary.configuration.settings.recombination = HOSTILE;
  summary.configuration.pileup = { areas: true, ghostEt: HOSTILE, rho: { kind: 'kt', radius: HOSTILE }, subtract: true, softKiller: null };
  summary.configuration.grooming = { trim: { subjetRadius: HOSTILE, ptFraction: 0.05 } };
  summary.machine.cpuModel = HOSTILE;
  summary.machine.node = HOSTILE;
  summary.partial = true;
  summary.partialReason = HOSTILE;
  summary.invalidEvents = [{ event: 3, record: 3, offset: 40, reason: HOSTILE }];
  summary.machineLoad = { ...(summary.machineLoad ?? {}), busy: true, busyReason: HOSTILE };
  return summary;
}

function hostileCompare(): any {
  const document = structuredClone(compareDocument);
  document.files = { events: `${HOSTILE}.jl`, candidate: `${HOSTILE}.csv` };
  document.candidate = { format: HOSTILE, engine: HOSTILE, producer: HOSTILE };
  document.inputError = HOSTILE;
  document.problems = { [HOSTILE]: { count: 1, examples: [HOSTILE] } };
  return document;
}

describe('the report', () => {
  it('escapes every text taken from an input, in tables, notes and charts', async () => {
    const html = await buildReport({
      inputs: [runView(hostileRun(), `${HOSTILE}.json`), compareView(hostileCompare(), HOSTILE)],
      notes: [`no event display for ${HOSTILE}`],
    });
    expect(html).not.toMatch(/<script/i);
    // no text opened an attribute of its own: with every well-quoted attribute value taken out,
    // no tag holds the injected name (quotes in element content are plain text, vega leaves them)
    expect(html.replace(/="[^"]*"/g, '=""')).not.toMatch(/<[^<>]*onmouseover/i);
    // the texts are there, escaped: in tables and notes by the report, in legends by vega
    const shown = html.split('&lt;script&gt;alert(').length - 1;
    expect(shown).toBeGreaterThanOrEqual(15);
    expect(html).toContain('&amp;amp;');
  });

  it('of a 10^6-event run stays under 5 MB', async () => {
    const summary = structuredClone(runSummary);
    const service = new LatencyRecorder();
    const sample = new EventSample();
    let state = 7;
    for (let event = 0; event < 1_000_000; event++) {
      state = (state * 1103515245 + 12345) % 2147483648;
      const towers = 200 + (state % 800);
      const serviceNs = 1000 * towers * (1 + (state % 97) / 50);
      service.recordNs(serviceNs);
      sample.add(event, towers, serviceNs);
    }
    summary.histograms.service = service.encode();
    summary.latency.service = service.stats();
    delete summary.plainHistograms;
    const html = await buildReport({ inputs: [runView(summary, 'long run', { points: sample.points(), slowestEvent: sample.slowestEvent })] });
    expect(sample.seen).toBe(1_000_000);
    expect(html).toContain('data-chart="scaling"');
    expect(Buffer.byteLength(html)).toBeLessThan(5 * 1024 * 1024);
  });
});
