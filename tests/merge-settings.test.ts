// merge refuses shards that did not run alike: a grooming setting or a worker count that
// differs is named in one line, and the command exits 2 as for every other mismatch.

import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as mergeMain } from '../host/cli/commands/merge.js';
import { UsageError } from '../host/errors.js';
import { RunTally } from '../host/measure/run-tally.js';
import { describeMachine, renderSummary, type RunConfiguration, type RunSummary } from '../host/measure/summary.js';
import { mergeSummaries } from '../host/measure/summary-merge.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForTest } from './support/temp-dir.js';
import { testRunConfiguration } from './support/run-configuration.js';

function shard(index: number, extra: Partial<RunConfiguration>): RunSummary {
  const configuration = testRunConfiguration({ workers: 2, shard: { index, count: 2 }, ...extra });
  const tally = new RunTally();
  tally.read = tally.ok = 1;
  tally.recordService(20, 1000);
  const summary = renderSummary(tally, { configuration, shards: [{ index, count: 2 }], machine: describeMachine(), partial: false, partialReason: null, wallSeconds: 1 });
  return JSON.parse(JSON.stringify(summary)) as RunSummary;
}

const TRIM = { subjetRadius: 0.2, ptFraction: 0.05 };

describe('merge of shards that did not run alike', () => {
  it('refuses a different grooming, naming the setting', () => {
    const a = shard(0, { grooming: { trim: TRIM, softDrop: null } });
    const b = shard(1, { grooming: { trim: { ...TRIM, ptFraction: 0.1 }, softDrop: null } });
    expect(() => mergeSummaries([{ name: 'a.json', summary: a }, { name: 'b.json', summary: b }]))
      .toThrow(/^b\.json: configuration differs from a\.json: grooming\.trim is \{"subjetRadius":0\.2,"ptFraction":0\.1\}, there \{"subjetRadius":0\.2,"ptFraction":0\.05\} \(/);
  });

  it('refuses grooming in one shard and none in the other', () => {
    const a = shard(0, {});
    const b = shard(1, { grooming: { trim: null, softDrop: { zCut: 0.1, beta: 0 } } });
    expect(() => mergeSummaries([{ name: 'a.json', summary: a }, { name: 'b.json', summary: b }])).toThrow(/^b\.json: configuration differs from a\.json: grooming is /);
  });

  it('refuses different worker counts in one line, as a usage error', async () => {
    const dir = tempDirForTest('merge-settings');
    const a = join(dir, 'a.json');
    const b = join(dir, 'b.json');
    writeFileSync(a, JSON.stringify(shard(0, { workers: 2 })));
    writeFileSync(b, JSON.stringify(shard(1, { workers: 3 })));
    // a UsageError: the command line prints its one line and exits 2 (host/cli/cli.ts)
    const refusal = mergeMain([a, b, '-q'], fakeIo().io);
    await expect(refusal).rejects.toThrow(UsageError);
    await expect(refusal).rejects.toThrow(new RegExp(`^merge: ${b}: ran 3 workers, ${a} 2: shards of one job must run the same number of workers \\(give each the same --workers\\)$`));
  });
});
