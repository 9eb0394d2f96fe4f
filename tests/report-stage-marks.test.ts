// The HTML report marks a tail percentile resting on few events in every latency row, the
// stages' rows as the figures' (and as the text report does), and words a saturation by the
// cause that fired.

import { describe, expect, it } from 'vitest';
import { RunTally } from '../host/measure/run-tally.js';
import { mergedSaturation, runSaturation } from '../host/measure/saturation-figures.js';
import { describeMachine, renderSummary } from '../host/measure/summary.js';
import { runView } from '../host/report/report-data.js';
import { conditionLines, latencyTable } from '../host/report/run-tables.js';
import { testRunConfiguration } from './support/run-configuration.js';

const CONFIGURATION = testRunConfiguration({ arrival: { mode: 'fixed', rateHz: 100, seed: null } });

/** a run of `events` events, each 10 µs in every stage */
function viewOf(events: number, rates?: [number, number, boolean], merged?: RunTally['saturation']) {
  const tally = new RunTally();
  for (let k = 0; k < events; k++) {
    tally.read++;
    tally.ok++;
    tally.recordService(20, 10_000 + k);
    tally.stages.cluster.recordNs(10_000 + k);
  }
  if (rates) tally.recordRates(...rates);
  if (merged) tally.saturation = merged;
  const summary = renderSummary(tally, { configuration: CONFIGURATION, shards: [{ index: 0, count: 1 }], machine: describeMachine(), partial: false, partialReason: null, wallSeconds: 1 });
  return runView(JSON.parse(JSON.stringify(summary)), 'run.json');
}

/** the cells of the latency table's row labelled so */
function rowCells(html: string, label: string): string[] {
  const row = html.match(new RegExp(`<tr><th scope="row">${label}</th>(.*?)</tr>`))![1];
  return [...row.matchAll(/<td>([^<]*)<\/td>/g)].map((m) => m[1]);
}

describe('the HTML latency table', () => {
  it('marks a stage\'s p99 on fewer than 1,000 events and its p99.9 on fewer than 10,000', () => {
    // events, mean, p50, p90, p99, p99.9, max
    const cells = rowCells(latencyTable([viewOf(500)]), 'stage cluster');
    expect(cells[0]).toBe('500');
    expect(cells[4]).toMatch(/ \(few events\)$/);
    expect(cells[5]).toMatch(/ \(few events\)$/);
  });

  it('leaves a stage\'s p99 on 1,000 events or more unmarked', () => {
    const cells = rowCells(latencyTable([viewOf(1000)]), 'stage cluster');
    expect(cells[4]).not.toContain('few events');
    expect(cells[5]).toMatch(/ \(few events\)$/);
  });
});

describe('the HTML saturation line', () => {
  it('names the rate\'s shortfall when only the rate fell short', () => {
    const html = conditionLines([viewOf(10, [100, 50, false])]);
    expect(html).toContain('sustained only 50 events/s; the sustained rate fell more than 5 % short of the offered one</li>');
  });

  it('of merged shards that kept up says the offered rate is their sum and each kept up', () => {
    const merged = mergedSaturation([runSaturation(100, 100, false), runSaturation(100, 99, false)], 150, 1);
    const html = conditionLines([viewOf(10, undefined, merged)]);
    expect(html).toContain('not saturated: offered 200 events/s, sustained 150 events/s (summed over 2 shards; each kept up with its own rate)</li>');
  });
});
