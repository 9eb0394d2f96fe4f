// jetlag run's exit status as a CI gate: no event clustered, and --max-miss-fraction (workers from dist/).
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { parseArgs } from '../host/cli/args.js';
import { UsageError } from '../host/errors.js';
import { main as runMain, runOptionsFrom, spec as runSpec } from '../host/cli/commands/run.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const options = (argv: string[]) => runOptionsFrom(parseArgs(runSpec, ['events.jl', ...argv]));

describe('jetlag run --max-miss-fraction', () => {
  it('needs --budget-us', () => {
    expect(() => options(['--max-miss-fraction', '0.01'])).toThrow(new UsageError('run: --max-miss-fraction needs --budget-us'));
  });

  it('is a fraction in [0, 1]', () => {
    expect(() => options(['--budget-us', '100', '--max-miss-fraction', '1.5'])).toThrow('run: --max-miss-fraction must be a fraction in [0, 1], got 1.5');
  });
});

/** real workers on a shared machine: a generous guard, not a timing */
const WORKER_TEST_MS = 60_000;

describe('jetlag run exit status', () => {
  const dir = tempDirForSuite('exit');
  const file = writeEventFile(join(dir, 'toy.events'), toyEvents(20, 41, 5));
  const base = [file.path, '--workers', '1', '--batch', '4', '--check', 'none'];

  it('is 1 when more events miss the budget than --max-miss-fraction allows', async () => {
    // a 1 ns budget: every event's time in the worker is over it
    const fake = fakeIo();
    expect(await runMain([...base, '--budget-us', '0.001', '--max-miss-fraction', '0.5'], fake.io)).toBe(1);
    expect(fake.stderr()).toContain('jetlag run: 20 of 20 events (100.000 %) missed the 0.001 µs budget on worker time, more than --max-miss-fraction 0.5 allows');
  }, WORKER_TEST_MS);

  it('is 0 when the misses stay within --max-miss-fraction', async () => {
    // a budget of a thousand seconds: no event misses it
    const fake = fakeIo();
    expect(await runMain([...base, '--budget-us', '1e9', '--max-miss-fraction', '0'], fake.io)).toBe(0);
    expect(fake.stderr()).not.toContain('missed');
  }, WORKER_TEST_MS);

  it('is 1 when no event was clustered (every event invalid)', async () => {
    const invalid = writeEventFile(join(dir, 'invalid.events'), [
      { event: 1, towerIndex: [5, 9], towerEt: [1.5, Number.NaN] },
      { event: 2, towerIndex: [7], towerEt: [Number.POSITIVE_INFINITY] },
    ]);
    const fake = fakeIo();
    expect(await runMain([invalid.path, '--workers', '1', '--check', 'none'], fake.io)).toBe(1);
    expect(fake.stderr()).toContain('jetlag run: no event was clustered (2 read: 2 invalid, 0 in failed batches)');
    expect(fake.stdout()).toContain('towers      none clustered');
  }, WORKER_TEST_MS);
});
