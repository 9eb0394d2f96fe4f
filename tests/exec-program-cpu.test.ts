// `--program-cpu same`: each worker thread and its engine program held on one CPU (taskset),
// the program's restarts included, in real pool workers, closed and open loop, and in the
// `cluster` command; the run's counts as without it. The program notes its own
// Cpus_allowed_list (tests/fixtures/engines/note-cpus.sh) and then becomes the fault fixture
// (tests/fixtures/engines/faulty-engine.mjs).

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runEvents } from '../host/pipeline/run.js';
import { formatReport } from '../host/measure/report.js';
import { mergeSummaries } from '../host/measure/summary-merge.js';
import type { RunSummary } from '../host/measure/summary.js';
import { parseArgs } from '../host/cli/args.js';
import { runOptionsFrom, spec as runSpec } from '../host/cli/commands/run.js';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { UsageError } from '../host/errors.js';
import { ExecEngineError } from '../host/pipeline/exec-error.js';
import { cpusOfList } from '../host/pipeline/exec-cpu.js';
import type { ExecWorkerConfig } from '../host/pipeline/exec-run-contract.js';
import type { ClusterSettings } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite, tempDirForTest } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';

const NOTE_CPUS = join(import.meta.dirname, 'fixtures', 'engines', 'note-cpus.sh');
const FAULTY = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const SETTINGS: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0.2, recombination: 'e' };
const ALL = { mode: 'all', fraction: 1, seed: 1 } as const;
const NONE = { mode: 'none', fraction: 0, seed: 1 } as const;
const dir = tempDirForSuite('exec-program-cpu');
const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(40, 5, 2)).path;

/** this thread's allowed CPUs, as /proc writes them (e.g. 0-1) */
function ownCpus(): string {
  return /^Cpus_allowed_list:\s*(\S+)/m.exec(readFileSync('/proc/thread-self/status', 'utf8'))![1];
}
const severalCpus = /[-,]/.test(ownCpus());

function noting(notes: string, mode: string, event: number, programCpu?: 'same' | 'any'): ExecWorkerConfig {
  return {
    argv: [NOTE_CPUS, notes, process.execPath, FAULTY, mode, String(event)], label: `exec:faulty-engine ${mode}`,
    timeoutMs: 10_000, maxRestarts: 3, tolerance: null, ...(programCpu ? { programCpu } : {}),
  };
}

/** one line per program started: the CPUs it was allowed */
function notedCpus(notes: string): string[] {
  return readFileSync(notes, 'utf8').trim().split('\n');
}

describe('run --program-cpu same', () => {
  it.skipIf(!severalCpus)('holds each worker\'s program on one CPU of its own, with the counts of a run without it', async () => {
    const notes = join(tempDirForTest('program-cpu'), 'cpus');
    const held = await runEvents({ input, workers: 2, batch: 4, check: ALL, settings: SETTINGS, progress: null, program: noting(notes, 'well', -1, 'same') });
    const free = await runEvents({ input, workers: 2, batch: 4, check: ALL, settings: SETTINGS, progress: null, program: noting(`${notes}.free`, 'well', -1) });
    const cpus = notedCpus(notes);
    expect(cpus).toHaveLength(2);
    for (const cpu of cpus) expect(cpu).toMatch(/^\d+$/);
    expect(new Set(cpus).size).toBe(2);
    // without the option the programs keep every CPU jetlag has
    for (const cpu of notedCpus(`${notes}.free`)) expect(cpu).toBe(ownCpus());
    expect(held.events).toEqual(free.events);
    expect(held.events.ok).toBe(40);
    expect([held.check.checked, held.check.agreeing, held.check.disagreeing]).toEqual([free.check.checked, free.check.agreeing, free.check.disagreeing]);
    // the fixture answers with no jets: the events with reference jets disagree, so the counts say something
    expect(held.check.disagreeing).toBeGreaterThan(0);
    expect(held.configuration.programCpu).toBe('same');
    expect(free.configuration.programCpu).toBe('any');
    expect(formatReport(held).split('\n')[0]).toContain('each worker and its program held on one CPU');
  }, 120_000);

  it.skipIf(!severalCpus)('starts a crashed program again on the same CPU', async () => {
    const notes = join(tempDirForTest('program-cpu-restart'), 'cpus');
    const summary = await runEvents({ input, workers: 1, batch: 8, check: NONE, settings: SETTINGS, progress: null, program: noting(notes, 'crash', 17, 'same') });
    expect(summary.events).toEqual({ read: 40, ok: 39, invalid: 0, failed: 1 });
    expect(summary.engineRestarts).toBe(1);
    const cpus = notedCpus(notes);
    expect(cpus).toHaveLength(2);
    expect(cpus[0]).toMatch(/^\d+$/);
    expect(cpus[1]).toBe(cpus[0]);
  }, 120_000);

  it.skipIf(!severalCpus)('holds the programs of an open loop too', async () => {
    const notes = join(tempDirForTest('program-cpu-open'), 'cpus');
    const summary = await runEvents({ input, workers: 2, arrival: { kind: 'fixed', rateHz: 2000 }, check: NONE, settings: SETTINGS, progress: null, program: noting(notes, 'well', -1, 'same') });
    expect(summary.events).toEqual({ read: 40, ok: 40, invalid: 0, failed: 0 });
    const cpus = notedCpus(notes);
    expect(cpus.length).toBeGreaterThan(0);
    for (const cpu of cpus) expect(cpu).toMatch(/^\d+$/);
    expect(new Set(cpus).size).toBe(cpus.length);
  }, 120_000);
});

describe('shards run with and without --program-cpu same', () => {
  it('are not merged: their pipes were timed differently', async () => {
    const shard = (index: number, programCpu: 'same' | 'any') => runEvents({
      input, workers: 1, check: NONE, settings: SETTINGS, progress: null, shard: { index, count: 2 },
      program: noting(join(dir, `merge-${index}`), 'well', -1, programCpu),
    });
    const shards = [await shard(0, 'same'), await shard(1, 'any')];
    expect(() => mergeSummaries(shards.map((summary, k) => ({ name: `shard ${k}`, summary: JSON.parse(JSON.stringify(summary)) as RunSummary }))))
      .toThrow(/shard 1: configuration differs from shard 0: --program-cpu is "any", there "same"/);
  }, 120_000);
});

describe('run --program-cpu same where it cannot be done', () => {
  it('stops the run with one line naming taskset when it cannot be run', async () => {
    const path = process.env.PATH;
    // the pool's threads take jetlag's environment when they start, so the programs they run find no taskset
    process.env.PATH = join(dir, 'no-such-folder');
    try {
      const run = runEvents({ input, workers: 1, check: NONE, settings: SETTINGS, progress: null, program: noting(join(dir, 'unused'), 'well', -1, 'same') });
      await expect(run).rejects.toThrow(ExecEngineError);
      await expect(run).rejects.toThrow(/^exec:faulty-engine well: --program-cpu same: cannot hold worker 0 on CPU \d+ with taskset -pc \d+ \d+ \(util-linux\): .*ENOENT$/);
    } finally {
      process.env.PATH = path;
    }
  }, 60_000);
});

describe('cluster --program-cpu same', () => {
  it.skipIf(!severalCpus)('holds the program on one CPU, and gives the command\'s thread its CPUs back at the end', async () => {
    const before = ownCpus();
    const notes = join(tempDirForTest('program-cpu-cluster'), 'cpus');
    const fake = fakeIo();
    const command = `exec:"${NOTE_CPUS}" "${notes}" "${process.execPath}" "${FAULTY}" well -1`;
    const code = await clusterMain([input, '--engine', command, '--program-cpu', 'same', '--out', join(dir, 'cluster.jets'), '--force'], fake.io);
    expect(code).toBe(0);
    expect(notedCpus(notes)).toHaveLength(1);
    expect(notedCpus(notes)[0]).toMatch(/^\d+$/);
    expect(ownCpus()).toBe(before);
  }, 60_000);
});

describe('the allowed CPUs as /proc lists them', () => {
  // the list format of Cpus_allowed_list: proc(5), "Cpus_allowed_list" (from memory)
  it('reads ranges and single CPUs', () => {
    expect(cpusOfList('0-2,5\n')).toEqual([0, 1, 2, 5]);
    expect(cpusOfList('3')).toEqual([3]);
  });
});

describe('--program-cpu on the command line', () => {
  const runOptions = (argv: string[]) => runOptionsFrom(parseArgs(runSpec, ['events.jetlag', ...argv]));

  it('takes same and any, and any when not given', () => {
    expect(runOptions(['--engine', 'exec:./c', '--program-cpu', 'same']).program!.programCpu).toBe('same');
    expect(runOptions(['--engine', 'exec:./c', '--program-cpu', 'any']).program!.programCpu).toBe('any');
    expect(runOptions(['--engine', 'exec:./c']).program!.programCpu).toBe('any');
  });

  it('refuses another value with a usage error', () => {
    expect(() => runOptions(['--engine', 'exec:./c', '--program-cpu', '1'])).toThrow(new UsageError('run: --program-cpu must be same or any, got "1"'));
  });

  it('refuses it without exec:', async () => {
    expect(() => runOptions(['--program-cpu', 'same'])).toThrow(/--program-cpu apply to --engine exec: only/);
    await expect(clusterMain([input, '--program-cpu', 'same'], fakeIo().io)).rejects.toThrow(new UsageError('cluster: --program-cpu applies to --engine exec: only'));
  });
});
