// Progress on long commands: drawn only on a terminal, and its percentage only of a size known.
import { describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { plainFileBytes } from '../host/measure/input-progress.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

describe('progress of cluster, compare and export', () => {
  const dir = tempDirForSuite('progress');
  const events = writeEventFile(join(dir, 'toy.events'), toyEvents(12, 8, 5)).path;

  it('draws nothing off a terminal', async () => {
    const jets = join(dir, 'toy.jets');
    const runs: [typeof clusterMain, string[]][] = [
      [clusterMain, [events, '--out', jets]],
      [exportMain, [events, '--out', join(dir, 'toy.csv')]],
      [compareMain, [events, jets]],
    ];
    for (const [main, argv] of runs) {
      const fake = fakeIo({ isTty: false });
      await main(argv, fake.io);
      expect(fake.stderr()).not.toContain('\r');
    }
  }, 60_000);

  it('knows the size of a plain file and not of gzip or stdin', () => {
    const gzipped = join(dir, 'toy.events.gz');
    writeFileSync(gzipped, gzipSync(Buffer.alloc(100)));
    expect(plainFileBytes(events)).toBeGreaterThan(0);
    expect(plainFileBytes(gzipped)).toBe(0);
    expect(plainFileBytes('-')).toBe(0);
  });
});
