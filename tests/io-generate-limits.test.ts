// `jetlag generate` refuses a pileup or hard-jet count so large that the event could not be
// made in memory or read back by the project's own readers (record cap 64 MiB), as bad usage
// (one line, exit 2) instead of a crash or an unreadable file.

import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { UsageError } from '../host/errors.js';
import { MAX_HARD_JETS, MAX_PILEUP, main as generateMain } from '../host/cli/commands/generate.js';
import { openEventSource } from '../host/input/event-source.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('generate-limits');

describe('generate limits', () => {
  it('refuses a pileup of a billion interactions as bad usage, writing nothing', async () => {
    const out = join(dir, 'huge-pileup.jetlag');
    await expect(generateMain(['--events', '1', '--pileup', '1e9', '--out', out], fakeIo().io)).rejects.toThrow(UsageError);
    expect(existsSync(out)).toBe(false);
  });

  it('refuses more hard jets than it accepts', async () => {
    const out = join(dir, 'hard-jets.jetlag');
    await expect(generateMain(['--events', '1', '--hard-jets', String(MAX_HARD_JETS + 1), '--out', out], fakeIo().io)).rejects.toThrow(/--hard-jets/);
  });

  it('writes a raw event at the largest pileup that its own reader takes back', async () => {
    const out = join(dir, 'largest.jetlag');
    expect(await generateMain(['--events', '1', '--pileup', String(MAX_PILEUP), '--raw', '--out', out], fakeIo().io)).toBe(0);
    const source = await openEventSource(out);
    let records = 0;
    for await (const record of source.records) {
      expect(record.bytes.length).toBeLessThan(64 * 1024 * 1024);
      records++;
    }
    expect(records).toBe(1);
  });
});
