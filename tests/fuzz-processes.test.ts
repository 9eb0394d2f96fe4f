// A short run of the fuzz campaign through the commands as processes (bench/fuzz/processes.ts;
// the long one is `npm run fuzz -- --processes N`): mutated inputs given to run, cluster,
// compare, merge and export as child processes of the built command line (dist/: `npm run
// build:host`), with no stack trace, no exit code other than 0, 1 and 2, no signal and none
// over the time bound. Seeded: a finding names its seed and case.

import { describe, expect, it } from 'vitest';
import { formatProcessTally, runProcessCampaign } from '../bench/fuzz/processes.js';

describe('the commands on mutated inputs', () => {
  it('accept or reject 12 of them, two processes at a time, without a crash', async () => {
    const tally = await runProcessCampaign({ seed: 20261, count: 12, concurrency: 2, boundMs: 60_000 });
    expect(tally.cases).toBe(12);
    expect(tally.findings, formatProcessTally(tally)).toEqual([]);
    // rejections are exit 2 with a line saying what is wrong
    expect([...tally.rejected.values()].reduce((a, b) => a + b, 0)).toBeGreaterThan(0);
  }, 180_000);
});
