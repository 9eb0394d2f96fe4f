// jetlag run and jetlag merge as commands, in-process (workers from dist/).
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from '../host/cli/args.js';
import { UsageError } from '../host/errors.js';
import { main as runMain, runOptionsFrom, spec as runSpec } from '../host/cli/commands/run.js';
import { main as mergeMain } from '../host/cli/commands/merge.js';
import { ProgressBar } from '../host/measure/progress.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const options = (argv: string[]) => runOptionsFrom(parseArgs(runSpec, ['events.jl', ...argv]));

describe('jetlag run options', () => {
  it('take --poisson as seeded open-loop arrivals', () => {
    expect(options(['--poisson', '5000', '--seed', '9']).arrival).toEqual({ kind: 'poisson', rateHz: 5000, seed: 9 });
  });

  it('refuse --rate together with --poisson', () => {
    expect(() => options(['--rate', '10', '--poisson', '10'])).toThrow(new UsageError('run: give --rate or --poisson, not both'));
  });

  it('read --check as all, none or a fraction', () => {
    expect(options(['--check', 'all']).check).toMatchObject({ mode: 'all', fraction: 1 });
    expect(options(['--check', 'none']).check).toMatchObject({ mode: 'none', fraction: 0 });
    expect(options(['--check', '0.05']).check).toMatchObject({ mode: 'fraction', fraction: 0.05 });
    expect(() => options(['--check', '1.5'])).toThrow('run: --check must be all, none or a fraction in [0, 1], got "1.5"');
  });

  it('read --shard k/n and refuse k >= n', () => {
    expect(options(['--shard', '2/5']).shard).toEqual({ index: 2, count: 5 });
    expect(() => options(['--shard', '5/5'])).toThrow('run: --shard must be k/n with 0 <= k < n, got "5/5"');
  });

  it('need --budget-us for --find-rate', () => {
    expect(() => options(['--find-rate'])).toThrow('run: --find-rate needs --budget-us');
  });

  it('take --cpu-wait-per-event in an open loop and refuse it in a closed one', () => {
    expect(options(['--rate', '100', '--cpu-wait-per-event']).cpuWaitPerEvent).toBe(true);
    expect(options(['--rate', '100']).cpuWaitPerEvent).toBe(false);
    expect(() => options(['--cpu-wait-per-event'])).toThrow(UsageError);
  });

  it('take the algorithm shorthand for p', () => {
    expect(options(['--algorithm', 'kt', '--radius', '0.6']).settings).toMatchObject({ p: 1, radius: 0.6 });
  });
});

describe('jetlag run and merge', () => {
  const dir = tempDirForSuite('cmd');
  const file = writeEventFile(join(dir, 'toy.events'), toyEvents(60, 31, 5));

  it('print the latency table and write the JSON summary, with no progress bar off a terminal', async () => {
    const fake = fakeIo();
    const code = await runMain([file.path, '--workers', '1', '--batch', '8', '--json', join(dir, 'all.json'), '--budget-us', '50000'], fake.io);
    expect(code).toBe(0);
    expect(fake.stdout()).toMatch(/p50\s+p90\s+p99\s+p99\.9\s+max/);
    expect(fake.stdout()).toContain('read 60 · ok 60 · invalid 0 · failed 0');
    expect(fake.stderr()).not.toContain('\r');
    const summary = JSON.parse(readFileSync(join(dir, 'all.json'), 'utf8'));
    expect(Object.keys(summary.latency.endToEnd)).toEqual(['count', 'p50_us', 'p90_us', 'p99_us', 'p999_us', 'max_us', 'mean_us']);
    expect(summary.machine.cores).toBeGreaterThan(0);
    expect(summary.machine.node).toBe(process.version);
    expect(typeof summary.histograms.service.hdr).toBe('string');
    expect(summary.throughput.eventsPerSecond).toBeGreaterThan(0);
  });

  it('merge two shard summaries into the counts of the whole file', async () => {
    for (const k of [0, 1]) {
      expect(await runMain([file.path, '--workers', '1', '--batch', '8', '--shard', `${k}/2`, '--json', join(dir, `s${k}.json`), '-q'], fakeIo().io)).toBe(0);
    }
    const fake = fakeIo();
    expect(await mergeMain([join(dir, 's0.json'), join(dir, 's1.json'), '--json', join(dir, 'merged.json')], fake.io)).toBe(0);
    const merged = JSON.parse(readFileSync(join(dir, 'merged.json'), 'utf8'));
    expect(merged.events).toEqual({ read: 60, ok: 60, invalid: 0, failed: 0 });
    expect(merged.shards).toEqual([{ index: 0, count: 2 }, { index: 1, count: 2 }]);
    expect(fake.stdout()).toContain('shards 0,1 of 2');
  });

  it('refuse to merge a summary with itself, as bad usage naming the file', async () => {
    const s0 = join(dir, 'self-0.json');
    expect(await runMain([file.path, '--workers', '1', '--batch', '8', '--shard', '0/2', '--json', s0, '-q'], fakeIo().io)).toBe(0);
    await expect(mergeMain([s0, s0], fakeIo().io)).rejects.toThrow(new UsageError(`merge: ${s0}: shard 0/2 is already in ${s0}`));
  });
});

describe('the progress bar', () => {
  it('shows events, rate and an ETA from the bytes read', () => {
    // a quarter of the bytes in 10 s: three quarters left take 30 s
    expect(ProgressBar.line(5000, 500, 250, 1000, 10)).toBe('[######..................]  25% 5,000 events 500/s ETA 30s');
  });

  it('draws nothing when disabled', () => {
    const fake = fakeIo();
    const bar = new ProgressBar(fake.io.stderr, { eventsDone: () => 1, bytesDone: () => 1 }, { bytes: 10 }, false);
    bar.start();
    bar.stop();
    expect(fake.stderr()).toBe('');
  });
});
