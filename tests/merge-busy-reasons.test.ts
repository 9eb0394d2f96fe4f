// A merge's BUSY line gives each shard's reason once, led by the shards that gave it.

import { describe, expect, it } from 'vitest';
import { judgeMachineLoad, shardBusyReasons } from '../host/measure/machine-load.js';
import { formatReport } from '../host/measure/report.js';
import { RunTally } from '../host/measure/run-tally.js';
import { describeMachine, renderSummary, type RunSummary } from '../host/measure/summary.js';
import { mergeSummaries } from '../host/measure/summary-merge.js';
import { testRunConfiguration } from './support/run-configuration.js';

function shard(index: number, loadAverageStart: number, cpuSeconds: number): RunSummary {
  const configuration = testRunConfiguration({ workers: 2, shard: { index, count: 3 } });
  const tally = new RunTally();
  tally.read = tally.ok = 1;
  tally.recordService(20, 1000);
  tally.machineLoad = judgeMachineLoad({ cores: 2, loadAverageStart, loadAverageEnd: 0, cpuSeconds, wallSeconds: 4, workerBusySeconds: 3.8 });
  const summary = renderSummary(tally, { configuration, shards: [{ index, count: 3 }], machine: describeMachine(), partial: false, partialReason: null, wallSeconds: 4 });
  return JSON.parse(JSON.stringify(summary)) as RunSummary;
}

describe('the merged BUSY line', () => {
  it('gives a reason two shards share once, led by both, and another led by its own shard', () => {
    const merged = mergeSummaries([
      { name: 'a.json', summary: shard(0, 6.5, 4) },
      { name: 'b.json', summary: shard(1, 6.5, 2) },
      { name: 'c.json', summary: shard(2, 0.5, 4) },
    ]);
    expect(formatReport(merged)).toContain('  BUSY        figures taken on a busy machine: shards 0, 1: load average 6.50 before the run on 2 cores; ' +
      'shard 1: the process got 2.00 s of CPU for 3.80 s its workers spent on events\n');
  });

  it('keeps the shards a merged summary already named when merged again', () => {
    expect(shardBusyReasons([
      { shards: [0, 1], busyReason: 'shards 0, 1: load average 6.50 before the run on 2 cores' },
      { shards: [2], busyReason: 'load average 6.50 before the run on 2 cores' },
    ])).toBe('shards 0, 1, 2: load average 6.50 before the run on 2 cores');
  });
});
