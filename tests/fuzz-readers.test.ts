// A short run of the fuzz campaign (bench/fuzz/campaign.ts; the long one is `npm run fuzz`):
// mutated event, jets, CSV and candidate files and run summaries through the readers, with no
// exception other than the readers' own, none over the time bound, and every rejection one
// line with its byte offset. Seeded: a finding names its seed and case.

import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { formatTally, makeSeeds, runCampaign } from '../bench/fuzz/campaign.js';
import { tempDirForTest } from './support/temp-dir.js';

describe('the readers on mutated inputs', () => {
  it('reject or read 300 of them without a crash, each rejection one line with a byte offset', async () => {
    const tally = await runCampaign({ seed: 20260, count: 300, boundMs: 5000 });
    expect(tally.cases).toBe(300);
    expect(tally.findings, formatTally(tally)).toEqual([]);
    // the mutations reach both sides: some inputs still read, many are refused
    expect(tally.accepted).toBeGreaterThan(0);
    expect(tally.rejected.size).toBeGreaterThan(3);
  }, 60_000);

  it('start from valid inputs: each of them, unmutated, is read whole with no problem', async () => {
    const problems: string[] = [];
    const scratch = join(tempDirForTest('fuzz-seeds'), 'summary.json');
    for (const seed of makeSeeds()) {
      const read = await seed.read(seed.bytes, { scratch, problem: (text) => problems.push(`${seed.name}: ${text}`) })
        .catch((error: Error) => { problems.push(`${seed.name}: ${error.message}`); return 0; });
      expect(read, seed.name).toBeGreaterThan(0);
    }
    expect(problems).toEqual([]);
  });
});
