import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { UsageError } from '../host/errors.js';
import { main as generateMain, parsePileup } from '../host/cli/commands/generate.js';
import { generateEvents } from '../host/generator/generate.js';
import { ProgressBar } from '../host/measure/progress.js';
import { DEFAULT_GRID } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

function towerCounts(settings: { pileup: number; pileupMax?: number }): number[] {
  return [...generateEvents(DEFAULT_GRID, { events: 150, seed: 4, ...settings })].map((event) => event.towerIndex.length);
}

describe('generate --pileup LOW:HIGH', () => {
  it('reads MU or LOW:HIGH', () => {
    expect(parsePileup(undefined)).toEqual({ pileup: 200 });
    expect(parsePileup('140')).toEqual({ pileup: 140 });
    expect(parsePileup('50:250')).toEqual({ pileup: 50, pileupMax: 250 });
  });

  it('refuses a range upside down or malformed, in one line', () => {
    expect(() => parsePileup('250:50')).toThrow(new UsageError('generate: --pileup LOW:HIGH needs 0 <= LOW <= HIGH <= 100000, got "250:50"'));
    expect(() => parsePileup('1:2:3')).toThrow('generate: --pileup LOW:HIGH needs');
    expect(() => parsePileup('x')).toThrow(new UsageError('generate: --pileup must be a number, got "x"'));
  });

  it('spreads the tower multiplicity over more than the factor 1.5 the scaling fit needs', () => {
    const ranged = towerCounts({ pileup: 50, pileupMax: 250 });
    const fixed = towerCounts({ pileup: 150 });
    const spread = (counts: number[]) => Math.max(...counts) / Math.min(...counts);
    expect(spread(ranged)).toBeGreaterThan(1.5);
    expect(spread(ranged)).toBeGreaterThan(spread(fixed));
  });
});

describe('generate progress', () => {
  const dir = tempDirForSuite('generate-progress');

  it('draws nothing off a terminal', async () => {
    const fake = fakeIo({ isTty: false });
    expect(await generateMain(['--events', '20', '--pileup', '5:10', '--out', join(dir, 'a.events')], fake.io)).toBe(0);
    expect(fake.stderr()).not.toContain('\r');
  });

  it('gives the percentage of the events when their total is known', () => {
    // 160 of 300 events: 53 %, whatever has been read ahead
    expect(ProgressBar.line(160, 80, 160, 300, 2)).toBe('[#############...........]  53% 160 events 80/s ETA 2s');
  });

  it('gives events and rate only when the size is unknown', () => {
    expect(ProgressBar.line(160, 80, 0, 0, 2)).toBe('160 events 80/s');
  });
});
