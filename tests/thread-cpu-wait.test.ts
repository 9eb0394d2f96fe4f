// Each event's wait for a CPU (host/measure/thread-cpu-wait.ts): read from Linux's per-thread
// schedstat (second field: time spent on a run queue, ns; the kernel's
// Documentation/scheduler/sched-stats.rst), and charged to the open loop's events.
import { afterEach, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { parseRunQueueWaitNs, ThreadCpuWait } from '../host/measure/thread-cpu-wait.js';
import { runEvents } from '../host/pipeline/run.js';
import { RunTally } from '../host/measure/run-tally.js';
import { harnessFigures } from '../host/measure/harness-figures.js';
import { formatReport } from '../host/measure/report.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('thread-cpu-wait');
const bytes = (text: string) => new TextEncoder().encode(text);

describe('the schedstat line', () => {
  it('gives its second number, the run-queue wait', () => {
    const line = bytes('98765432101 1234567 4242\n');
    expect(parseRunQueueWaitNs(line, line.length)).toBe(1234567);
  });

  it('gives -1 for a text that is not one', () => {
    for (const text of ['', '12', 'abc 12 3\n', '12  3\n', '12 x 3\n']) {
      const line = bytes(text);
      expect(parseRunQueueWaitNs(line, line.length), text).toBe(-1);
    }
  });
});

describe('the calling thread\'s wait', () => {
  it('is unknown (-1) where the file does not exist', () => {
    const reader = new ThreadCpuWait(join(dir, 'no-such-schedstat'));
    expect(reader.available).toBe(false);
    expect(reader.waitNs()).toBe(-1);
  });

  it('is unknown where the file holds no schedstat line', () => {
    const path = join(dir, 'not-schedstat');
    writeFileSync(path, 'hello\n');
    const reader = new ThreadCpuWait(path);
    expect(reader.available).toBe(false);
    expect(reader.waitNs()).toBe(-1);
  });

  it.runIf(process.platform === 'linux')('is read again on each call and never goes back', () => {
    const reader = new ThreadCpuWait();
    expect(reader.available).toBe(true);
    let last = reader.waitNs();
    expect(last).toBeGreaterThanOrEqual(0);
    for (let k = 0; k < 50; k++) {
      const now = reader.waitNs();
      expect(now).toBeGreaterThanOrEqual(last);
      last = now;
    }
    reader.close();
    expect(reader.waitNs()).toBe(-1);
  });
});

describe('the threads\' wait for a CPU of shards merged', () => {
  function shard(workersNs: number, mainNs: number, delayedEvents: number[]): RunTally {
    const tally = new RunTally();
    tally.recordThreadCpuWait(workersNs, mainNs, 2);
    for (const waitNs of delayedEvents) tally.recordHarnessOverhead(100_000, waitNs);
    return tally;
  }

  it('adds the totals of shards that all have them', () => {
    const merged = new RunTally();
    merged.merge(shard(3e6, 1e6, [0]));
    merged.merge(shard(5e6, 2e6, [50_000]));
    expect(harnessFigures(merged, true).cpuWait).toMatchObject({ workersMs: 8, mainMs: 3, servingThreads: 4 });
  });

  it('leaves the totals unknown when one shard lacks its figure, and keeps the per-event counts', () => {
    const merged = new RunTally();
    merged.merge(shard(3e6, 1e6, [0, 50_000]));
    merged.merge(shard(-1, 2e6, [50_000, 0, 0]));
    merged.merge(shard(5e6, 2e6, []));
    const cpuWait = harnessFigures(merged, true).cpuWait!;
    expect(cpuWait.workersMs).toBeNull();
    expect(cpuWait.mainMs).toBeNull();
    expect(cpuWait.perEvent).toMatchObject({ events: 5, delayed: 2 });
    expect(cpuWait.perEvent!.overheadUndelayed.count).toBe(3);
  });
});

describe.runIf(process.platform === 'linux')('an open loop on a machine kept busy', () => {
  const faultWorker = join(__dirname, '..', 'dist', 'tests', 'support', 'fault-worker.js');
  const file = writeEventFile(join(dir, 'toy.events'), toyEvents(40, 31, 2));
  let spinners: ChildProcess[] = [];
  let stubBefore: string | undefined;

  beforeAll(() => {
    if (!existsSync(faultWorker)) throw new Error('build first: npm run build:host');
  });
  afterEach(() => {
    for (const spinner of spinners) spinner.kill('SIGKILL');
    spinners = [];
    if (stubBefore === undefined) delete process.env.JETLAG_TEST_STUB_US;
    else process.env.JETLAG_TEST_STUB_US = stubBefore;
  });

  it('charges the time its threads waited for a CPU to the run, and with --cpu-wait-per-event to each event, and the counts add up', async () => {
    // twice as many busy processes as cores: every runnable thread of the run waits its turn
    for (let k = 0; k < 2 * availableParallelism(); k++) {
      // each stops by itself after 20 s, should the test be cut off before afterEach
      spinners.push(spawn(process.execPath, ['-e', 'const end = Date.now() + 20000; while (Date.now() < end) {}'], { stdio: 'ignore' }));
    }
    stubBefore = process.env.JETLAG_TEST_STUB_US;
    // 3 ms of spinning per event, one due every 10 ms: a thread sharing a core with two
    // spinners is kept off it for milliseconds (the scheduler's slices)
    process.env.JETLAG_TEST_STUB_US = '3000';
    const summary = await runEvents({
      input: file.path, workers: 1, check: { mode: 'none', fraction: 0, seed: 1 }, workerFile: faultWorker, progress: null,
      arrival: { kind: 'fixed', rateHz: 100 }, cpuWaitPerEvent: true,
    });
    expect(summary.events.ok).toBe(40);
    const cpuWait = summary.harness.cpuWait!;
    // the worker spun 120 ms in all beside two busy processes per core
    expect(cpuWait.workersMs).toBeGreaterThan(1);
    expect(cpuWait.mainMs).toBeGreaterThanOrEqual(0);
    const perEvent = cpuWait.perEvent!;
    expect(perEvent.events).toBe(40);
    expect(perEvent.delayed).toBeGreaterThan(0);
    expect(perEvent.wait.max_us).toBeGreaterThan(perEvent.delayedOverUs);
    // an event's share is part of its thread's whole
    expect(perEvent.wait.max_us! / 1e3).toBeLessThanOrEqual(cpuWait.workersMs! + cpuWait.mainMs!);
    expect(perEvent.overheadUndelayed.count + perEvent.delayed).toBe(40);
    expect(summary.harness.overhead!.count).toBe(40);
    const report = formatReport(summary);
    expect(report).toContain(`${perEvent.delayed} of 40 events`);
    expect(report).toContain('main thread');
  });

  it('reads only the run\'s totals without --cpu-wait-per-event', async () => {
    stubBefore = process.env.JETLAG_TEST_STUB_US;
    process.env.JETLAG_TEST_STUB_US = '1000';
    const summary = await runEvents({
      input: file.path, workers: 1, maxEvents: 10, check: { mode: 'none', fraction: 0, seed: 1 }, workerFile: faultWorker, progress: null,
      arrival: { kind: 'fixed', rateHz: 100 },
    });
    const cpuWait = summary.harness.cpuWait!;
    expect(cpuWait.workersMs).toBeGreaterThanOrEqual(0);
    expect(cpuWait.perEvent).toBeUndefined();
    expect(summary.harness.overhead!.count).toBe(10);
  });
});
