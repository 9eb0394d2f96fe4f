// `run --engine exec:…`: an engine program in the pool's workers. The C++ example
// (examples/engines/cpp, built into a temporary folder as its own test does) on invented
// toy-generator events, checked in tolerance mode (clustering spec section 7); and the fault
// fixture (tests/fixtures/engines/faulty-engine.mjs) crashing on one event: that event fails,
// the run goes on, the counts add up.

import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runEvents } from '../host/pipeline/run.js';
import { mergeSummaries } from '../host/measure/summary-merge.js';
import { formatProgramReport } from '../host/measure/program-report.js';
import { engineStoppedOf } from '../host/pipeline/run-summary.js';
import { DEFAULT_TOLERANCE } from '../host/validate/tolerance-compare.js';
import type { ExecWorkerConfig } from '../host/pipeline/exec-run-contract.js';
import type { RunSummary } from '../host/measure/summary.js';
import type { ClusterSettings } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';

const EXAMPLE_DIR = join(import.meta.dirname, '..', 'examples', 'engines', 'cpp');
const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const SETTINGS: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0.2, recombination: 'e' };
const ALL = { mode: 'all', fraction: 1, seed: 1 } as const;
const NONE = { mode: 'none', fraction: 0, seed: 1 } as const;

function faulty(mode: string, event: number, maxRestarts = 3): ExecWorkerConfig {
  return { argv: [process.execPath, FIXTURE, mode, String(event)], label: `exec:faulty-engine ${mode}`, timeoutMs: 10_000, maxRestarts, tolerance: null };
}

describe('run with the C++ example as its engine', () => {
  const dir = tempDirForSuite('exec-run');
  const program = join(dir, 'pairwise-clusterer');
  const events = 300;
  let summary: RunSummary;

  beforeAll(async () => {
    execFileSync('make', ['-s', '-C', EXAMPLE_DIR, `BUILD=${dir}`], { stdio: ['ignore', 'ignore', 'inherit'] });
    const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(events, 12, 40)).path;
    summary = await runEvents({
      input, workers: 2, batch: 16, check: ALL, settings: SETTINGS, progress: null,
      program: { argv: [program], label: 'exec:pairwise-clusterer', timeoutMs: 10_000, maxRestarts: 0, tolerance: { ...DEFAULT_TOLERANCE, ptMin: SETTINGS.ptMin } },
    });
  }, 600_000);

  it('checks every event in tolerance mode, and every event agrees', () => {
    expect(summary.events).toEqual({ read: events, ok: events, invalid: 0, failed: 0 });
    expect(summary.check.mode).toBe('tolerance');
    expect(summary.check.checked).toBe(events);
    expect(summary.check.agreeing).toBe(events);
    expect(summary.check.tolerance?.agreement).toBe(1);
    // a check over events without jets would pass for any program
    expect(summary.jets).toBeGreaterThan(events);
  });

  it('reports the program\'s own time as service, below the round trip jetlag measures', () => {
    const service = summary.latency.service;
    const roundTrip = summary.latency.roundTrip!;
    expect(service.count).toBe(events);
    expect(roundTrip.count).toBe(events);
    expect(service.p50_us!).toBeGreaterThan(0);
    expect(service.p50_us!).toBeLessThan(roundTrip.p50_us!);
    expect(service.mean_us!).toBeLessThan(roundTrip.mean_us!);
    expect(summary.configuration.engine).toBe('exec:pairwise-clusterer');
  });

  it('says in its text report what the pipe\'s cost is made of', () => {
    const report = formatProgramReport(summary);
    expect(report).toMatch(/round trip - own time: the pipe's cost +p50 +[\d.]+ µs/);
    expect(report).toContain("the program's parse and serialisation outside its own clock");
  });
});

describe('run with a program that crashes on one event', () => {
  const dir = tempDirForSuite('exec-run-faults');
  const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(40, 5, 2)).path;

  it('fails that event with the exit, restarts the program and clusters the rest', async () => {
    const problems: string[] = [];
    const summary = await runEvents({ input, workers: 1, batch: 8, check: NONE, settings: SETTINGS, progress: null, program: faulty('crash', 17), onProblem: (line) => problems.push(line) });
    expect(summary.events).toEqual({ read: 40, ok: 39, invalid: 0, failed: 1 });
    expect(summary.failedEvents).toHaveLength(1);
    expect(summary.failedEvents![0]).toMatchObject({ event: 17, reason: 'exited' });
    expect(summary.failedEvents![0].message).toContain('exited with status 3');
    expect(summary.engineRestarts).toBe(1);
    expect(summary.latency.roundTrip!.count).toBe(39);
    expect(problems.some((line) => line.includes('event 17'))).toBe(true);
  }, 120_000);

  it('fails that event in an open loop too, and the counts add up', async () => {
    const summary = await runEvents({ input, workers: 2, arrival: { kind: 'fixed', rateHz: 2000 }, check: NONE, settings: SETTINGS, progress: null, program: faulty('crash', 17) });
    expect(summary.events).toEqual({ read: 40, ok: 39, invalid: 0, failed: 1 });
    expect(summary.failedEvents!.map((entry) => [entry.event, entry.reason])).toEqual([[17, 'exited']]);
    expect(summary.latency.endToEnd.count).toBe(39);
    expect(summary.latency.roundTrip!.count).toBe(39);
  }, 120_000);

  it('keeps failed events, restarts and round trips through a shard merge', async () => {
    const shard = (index: number) => runEvents({ input, workers: 1, batch: 8, check: NONE, settings: SETTINGS, progress: null, program: faulty('crash', 17), shard: { index, count: 2 } });
    const shards = [await shard(0), await shard(1)];
    const merged = mergeSummaries(shards.map((summary, k) => ({ name: `shard ${k}`, summary: JSON.parse(JSON.stringify(summary)) as RunSummary })));
    expect(merged.events).toEqual({ read: 40, ok: 39, invalid: 0, failed: 1 });
    expect(merged.failedEvents!.map((entry) => entry.event)).toEqual([17]);
    expect(merged.engineRestarts).toBe(shards[0].engineRestarts! + shards[1].engineRestarts!);
    expect(merged.latency.roundTrip!.count).toBe(39);
  }, 120_000);

  it('stops the run, partial and with the program\'s error, when the program fails more often than --engine-restarts', async () => {
    const summary = await runEvents({ input, workers: 1, batch: 8, check: NONE, settings: SETTINGS, progress: null, program: faulty('crash-all', 0, 1) });
    expect(summary.partial).toBe(true);
    expect(engineStoppedOf(summary)).toMatch(/failed 2 times and was restarted 1 times \(--engine-restarts 1\)/);
    expect(summary.events.read).toBe(summary.events.ok + summary.events.failed + summary.events.invalid);
  }, 120_000);
});
