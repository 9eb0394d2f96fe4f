import { describe, expect, it } from 'vitest';
import { describeMachine, renderSummary, type RunConfiguration, type RunSummary } from '../host/measure/summary.js';
import { MULTIPLICITY_EDGES, MultiplicityBins } from '../host/measure/multiplicity-fit.js';
import { RunTally } from '../host/measure/run-tally.js';
import { mergeSummaries } from '../host/measure/summary-merge.js';
import { formatReport } from '../host/measure/report.js';
import { testRunConfiguration } from './support/run-configuration.js';


function configuration(shardIndex: number, shardCount: number): RunConfiguration {
  return testRunConfiguration({
    engine: 'reference',
    settings: { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' },
    workers: 2,
    batch: 16,
    budgetUs: 500,
    check: { mode: 'fraction', fraction: 0.1, seed: 1 },
    shard: { index: shardIndex, count: shardCount },
  });
}

/** a tally of synthetic events: event k has 10 + k % 700 towers and takes a time that grows with them */
function tallyOf(events: number[]): RunTally {
  const tally = new RunTally();
  for (const k of events) {
    tally.read++;
    if (k % 97 === 0) { tally.addInvalid({ event: k, record: k, offset: 100 + k * 40, reason: 'tower 0 has non-finite et NaN' }); continue; }
    tally.ok++;
    const towers = 10 + (k % 700);
    const clusterNs = Math.round(50 * towers ** 1.3 * (1 + 0.01 * ((k * 7919) % 13)));
    tally.recordService(towers, clusterNs);
    tally.stages.cluster.recordNs(clusterNs);
    const endNs = clusterNs + ((k * 104_729) % 40_000);
    tally.recordOpenLoopEvent(endNs - clusterNs, 0, endNs);
    if (endNs > 500_000) tally.overBudget++;
  }
  return tally;
}

function render(tally: RunTally, shardIndex = 0, shardCount = 1, wallSeconds = 1): RunSummary {
  return renderSummary(tally, {
    configuration: configuration(shardIndex, shardCount),
    shards: [{ index: shardIndex, count: shardCount }],
    machine: describeMachine(),
    partial: false,
    partialReason: null,
    wallSeconds,
  });
}

/** a summary through JSON, as merge reads it from a file */
function asRead(summary: RunSummary): RunSummary {
  return JSON.parse(JSON.stringify(summary)) as RunSummary;
}

/** thousands of events through histograms on a shared machine: a generous guard, not a timing */
const HISTOGRAM_TEST_MS = 30_000;

describe('run summaries', () => {
  const all = Array.from({ length: 3000 }, (_, k) => k);

  it('merged from two shards equal one summary of all events in counts and every percentile', () => {
    const single = render(tallyOf(all));
    const shard0 = JSON.parse(JSON.stringify(render(tallyOf(all.filter((k) => Math.floor(k / 16) % 2 === 0)), 0, 2)));
    const shard1 = JSON.parse(JSON.stringify(render(tallyOf(all.filter((k) => Math.floor(k / 16) % 2 === 1)), 1, 2)));
    const merged = mergeSummaries([{ name: 'a.json', summary: shard0 }, { name: 'b.json', summary: shard1 }]);
    expect(merged.events).toEqual(single.events);
    expect(merged.latency).toEqual(single.latency);
    expect(merged.scaling).toEqual(single.scaling);
    expect(merged.towersPerEvent).toEqual(single.towersPerEvent);
    expect(merged.budget).toEqual(single.budget);
    expect(merged.invalidEvents).toEqual(single.invalidEvents);
    expect(merged.shards).toEqual([{ index: 0, count: 2 }, { index: 1, count: 2 }]);
  }, HISTOGRAM_TEST_MS);

  it('refuse to merge the same shard twice', () => {
    const shard0 = render(tallyOf([1, 2, 3]), 0, 2);
    expect(() => mergeSummaries([{ name: 'a.json', summary: shard0 }, { name: 'c.json', summary: shard0 }]))
      .toThrow('c.json: shard 0/2 is already in a.json');
  });

  it('refuse to merge runs with different clustering settings', () => {
    const a = render(tallyOf([1, 2, 3]), 0, 2);
    const b = render(tallyOf([4, 5, 6]), 1, 2);
    b.configuration = { ...b.configuration, settings: { ...b.configuration.settings, radius: 0.6 } };
    expect(() => mergeSummaries([{ name: 'a.json', summary: a }, { name: 'b.json', summary: b }])).toThrow('b.json: configuration differs from a.json: settings.radius is 0.6, there 0.4 (');
  });

  it('will not render counts that do not add up', () => {
    const tally = tallyOf([1, 2, 3]);
    tally.read++;
    expect(() => render(tally)).toThrow('event counts do not add up');
  });

  it('print a report with the percentiles, counts and budget misses', () => {
    const summary = render(tallyOf(all));
    const text = formatReport(summary);
    expect(text).toContain(`read 3,000 · ok ${summary.events.ok.toLocaleString('en-US')} · invalid ${summary.events.invalid} · failed 0`);
    expect(text).toMatch(/p50\s+p90\s+p99\s+p99\.9\s+max/);
    expect(text).toContain(`500 µs on worker time: ${summary.budget!.over.toLocaleString("en-US")} events over`);
  });
});

describe('merged summaries', () => {
  const evens = Array.from({ length: 1500 }, (_, k) => 2 * k);
  const odds = Array.from({ length: 1500 }, (_, k) => 2 * k + 1);

  it('give all events over the longest shard\'s wall time as the rate, and say so', () => {
    const merged = mergeSummaries([
      { name: 'a.json', summary: asRead(render(tallyOf(evens), 0, 2, 2)) },
      { name: 'b.json', summary: asRead(render(tallyOf(odds), 1, 2, 4)) },
    ]);
    expect(merged.throughput.eventsPerSecond).toBe(3000 / 4);
    expect(merged.throughput.wallSeconds).toBe(4);
    expect(merged.throughput.basis).toBe("all shards' events over the longest shard's wall time");
    expect(formatReport(merged)).toContain("750 events/s over 4.00 s (all shards' events over the longest shard's wall time)");
  });

  it('count the bytes read once: every shard reads the whole file', () => {
    const a = tallyOf(evens);
    const b = tallyOf(odds);
    a.bytesRead = b.bytesRead = 123_456;
    const merged = mergeSummaries([{ name: 'a.json', summary: asRead(render(a, 0, 2)) }, { name: 'b.json', summary: asRead(render(b, 1, 2)) }]);
    expect(merged.throughput.bytesRead).toBe(123_456);
  });

  it('fit alpha again from the added bins: two shards too narrow in N alone give one alpha together', () => {
    // shard 0 holds N 250..359, shard 1 N 360..519: neither spans a factor 1.5, both together do
    const all = Array.from({ length: 3000 }, (_, k) => k).filter((k) => k % 97 !== 0);
    const towersOf = (k: number) => 10 + (k % 700);
    const low = all.filter((k) => towersOf(k) >= 250 && towersOf(k) < 360);
    const high = all.filter((k) => towersOf(k) >= 360 && towersOf(k) < 520);
    const shard0 = asRead(render(tallyOf(low), 0, 2));
    const shard1 = asRead(render(tallyOf(high), 1, 2));
    expect(shard0.scaling.alpha).toBeNull();
    expect(shard1.scaling.alpha).toBeNull();
    const merged = mergeSummaries([{ name: 'a.json', summary: shard0 }, { name: 'b.json', summary: shard1 }]);
    expect(merged.scaling).toEqual(render(tallyOf([...low, ...high])).scaling);
    expect(merged.scaling.alpha).not.toBeNull();
  }, HISTOGRAM_TEST_MS);

  it('refuse a summary of a version this jetlag does not read, in one line', () => {
    const old = { ...asRead(render(tallyOf(evens), 0, 2)), version: 1 } as unknown as RunSummary;
    expect(() => mergeSummaries([{ name: 'old.json', summary: old }]))
      .toThrow(/^old\.json: summary version 1, this jetlag reads versions 2 and 3 only \(rerun that shard with this jetlag\)$/);
  });
});

describe('the report', () => {
  it('marks a p99.9 on fewer than 10,000 events and not a p99 on 1,000 or more', () => {
    const text = formatReport(render(tallyOf(Array.from({ length: 3000 }, (_, k) => k))));
    const service = text.split('\n').find((line) => line.trimStart().startsWith('service '))!;
    const cells = service.trim().split(/\s+/);
    // service, events, p50, p90, p99, p99.9, max, mean
    expect(cells[4]).not.toContain('*');
    expect(cells[5]).toMatch(/\*$/);
    expect(text).toContain('* p99 on fewer than 1,000 events or p99.9 on fewer than 10,000');
  });

  it('marks a p99 on fewer than 1,000 events and shows each row\'s event count', () => {
    const summary = render(tallyOf(Array.from({ length: 500 }, (_, k) => k + 1)));
    const service = formatReport(summary).split('\n').find((line) => line.trimStart().startsWith('service '))!;
    const cells = service.trim().split(/\s+/);
    expect(cells[1]).toBe(String(summary.latency.service.count));
    expect(cells[4]).toMatch(/\*$/);
  });

  it('states every setting that changes the result and the towers per event', () => {
    const text = formatReport(render(tallyOf([1, 2, 3])));
    expect(text.split('\n')[0]).toBe('events.jl · anti-kt p=-1 R=0.4 E-scheme ptMin 0 GeV threshold 0 GeV · grid η -2.5..2.5 50×64 · engine reference · 2 workers, batch 16 · closed loop');
    expect(text).toContain('towers      per event: mean 12.0 · p50 12 · max 13');
  });

  it('says on how many events a --find-rate trial\'s p99 rests when fewer than 1,000', () => {
    const summary = render(tallyOf([1, 2, 3]));
    summary.findRate = { budgetUs: 500, workers: 1, rateHz: 40, atCeiling: false, trials: [{ rateHz: 40, p99_us: 300, saturated: false, withinBudget: true, events: 100 }, { rateHz: 2000, p99_us: 900, saturated: true, withinBudget: false, events: 100 }] };
    expect(formatReport(summary)).toContain("find-rate   p99 within 500 µs up to 40 Hz (2 open-loop trials, 1 worker); each trial's p99 rests on only 100 events");
  });

  it('gives a --find-rate whose highest trial passed as a lower bound, with the trials\' workers', () => {
    const summary = render(tallyOf([1, 2, 3]));
    summary.findRate = { budgetUs: 500, workers: 3, rateHz: 2000, atCeiling: true, trials: [{ rateHz: 40, p99_us: 300, saturated: false, withinBudget: true, events: 1000 }, { rateHz: 2000, p99_us: 400, saturated: false, withinBudget: true, events: 1000 }] };
    expect(formatReport(summary)).toContain("find-rate   p99 within 500 µs up to at least 2,000 Hz (the search's ceiling, the closed loop's events/s; 2 open-loop trials, 3 workers)\n");
  });

  it('says why there is no alpha', () => {
    expect(formatReport(render(tallyOf([1, 2, 3])))).toContain('scaling     no exponent: N spans only 11..13 towers');
  });
});

describe('multiplicity bins', () => {
  it('put every N in the bin whose edges hold it, four bins per doubling', () => {
    for (let towers = 1; towers < 5000; towers++) {
      const bin = MultiplicityBins.binOf(towers);
      expect(MULTIPLICITY_EDGES[bin - 1]).toBeLessThanOrEqual(towers);
      expect(towers).toBeLessThan(MULTIPLICITY_EDGES[bin]);
    }
    expect(MultiplicityBins.binOf(0)).toBe(0);
    expect(MULTIPLICITY_EDGES.filter((edge) => edge >= 256 && edge < 512)).toEqual([256, 305, 363, 431]);
  });
});
