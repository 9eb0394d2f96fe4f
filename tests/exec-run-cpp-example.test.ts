// `jetlag run … --engine exec:` as a user runs it, through the command line (dist/host/cli/cli.js,
// built by `npm run build:host`): the C++ example (examples/engines/cpp, built into a temporary
// folder with Debian's protobuf as its own test does; .ci/run installs protobuf-compiler and
// libprotobuf-dev) on 300 invented toy-generator events, checked in tolerance mode (clustering
// spec section 7), its own time below the round trip; and the fault fixture
// (tests/fixtures/engines/faulty-engine.mjs) hanging on one event and writing garbage on
// another: that event fails with its reason, the run goes on, the counts add up.

import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { beforeAll, describe, expect, it } from 'vitest';
import type { RunSummary } from '../host/measure/summary.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { buildExampleEngine } from './support/example-engine.js';

const CLI = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const EXAMPLE_DIR = join(import.meta.dirname, '..', 'examples', 'engines', 'cpp');
const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const EVENTS = 300;
const run = promisify(execFile);

interface CliRun {
  status: number;
  stdout: string;
  stderr: string;
  summary: RunSummary;
}

/** `jetlag run ARGS --json F` as a child process: its exit status, its output and the summary it wrote. */
async function jetlagRun(dir: string, name: string, args: string[]): Promise<CliRun> {
  const json = join(dir, `${name}.json`);
  let status = 0;
  let stdout: string;
  let stderr: string;
  try {
    ({ stdout, stderr } = await run(process.execPath, [CLI, 'run', ...args, '--json', json], { encoding: 'utf8', timeout: 300_000 }));
  } catch (error) {
    const failed = error as { code?: unknown; stdout?: string; stderr?: string };
    if (typeof failed.code !== 'number') throw error;
    status = failed.code;
    stdout = failed.stdout ?? '';
    stderr = failed.stderr ?? '';
  }
  return { status, stdout, stderr, summary: JSON.parse(readFileSync(json, 'utf8')) as RunSummary };
}

describe.concurrent('jetlag run --engine exec: with a program that fails on one event', () => {
  const dir = tempDirForSuite('exec-run-faults-cli');
  const events = 40;
  const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(events, 5, 2)).path;

  function faulty(mode: string, event: number, ...more: string[]): string[] {
    return ['--engine', `exec:"${process.execPath}" "${FIXTURE}" ${mode} ${event}${more.map((arg) => ` "${arg}"`).join('')}`];
  }

  function expectCountsAddUp(summary: RunSummary): void {
    const e = summary.events;
    expect(e.ok + e.failed + e.invalid).toBe(e.read);
    expect(e.read).toBe(events);
  }

  it('that hangs on event 5: that event fails as timed out, the rest are clustered, exit 1', async () => {
    const { status, stderr, summary } = await jetlagRun(dir, 'hang', [input, ...faulty('hang', 5), '--workers', '1', '--check', 'none', '--engine-timeout-ms', '1500']);
    expect(summary.events).toEqual({ read: events, ok: events - 1, invalid: 0, failed: 1 });
    expectCountsAddUp(summary);
    expect(summary.failedEvents).toEqual([{ event: 5, reason: 'timed-out', message: expect.stringContaining('event 5: no answer within 1500 ms (timed out); killed') }]);
    expect(summary.engineRestarts).toBe(1);
    expect(summary.latency.roundTrip!.count).toBe(events - 1);
    expect(stderr).toContain('event 5: no answer within 1500 ms');
    // a failed event fails the run (host/cli/commands/run.ts), after it has gone on to the end
    expect(status).toBe(1);
  }, 120_000);

  it('that writes garbage for event 3: that event fails as malformed at its byte offset, the rest are clustered, exit 1', async () => {
    const offsetFile = join(dir, 'garbage-offset');
    const { status, stderr, summary } = await jetlagRun(dir, 'garbage', [input, ...faulty('garbage', 3, offsetFile), '--workers', '1', '--check', 'none', '--engine-timeout-ms', '1500']);
    const offset = readFileSync(offsetFile, 'utf8');
    expect(summary.events).toEqual({ read: events, ok: events - 1, invalid: 0, failed: 1 });
    expectCountsAddUp(summary);
    expect(summary.failedEvents).toEqual([{ event: 3, reason: 'malformed', message: expect.stringContaining(`event 3: output byte ${offset}: bad record length`) }]);
    expect(summary.engineRestarts).toBe(1);
    expect(summary.latency.roundTrip!.count).toBe(events - 1);
    expect(stderr).toContain(`event 3: output byte ${offset}`);
    expect(status).toBe(1);
  }, 120_000);
});

// The build takes most of this file's time: it starts at once, and the fault runs go on beside it.
const cppDir = tempDirForSuite('exec-run-cpp-cli');
const cppRun = (async () => {
  await buildExampleEngine(EXAMPLE_DIR, cppDir);
  const input = writeEventFile(join(cppDir, 'events.jetlag'), toyEvents(EVENTS, 12, 40)).path;
  return jetlagRun(cppDir, 'cpp', [input, '--engine', `exec:"${join(cppDir, 'pairwise-clusterer')}"`, '--workers', '2',
    '--check', 'all', '--tolerance', '--engine-timeout-ms', '10000']);
})();
// a failure is reported where the tests below await it, not as an unhandled rejection
cppRun.catch(() => {});

describe('jetlag run --engine exec: with the C++ example, --check all --tolerance', () => {
  let result: CliRun;

  beforeAll(async () => {
    result = await cppRun;
  }, 600_000);

  it('exits 0 having clustered every event, none failed', () => {
    expect(result.stderr).toBe('');
    expect(result.status).toBe(0);
    expect(result.summary.events).toEqual({ read: EVENTS, ok: EVENTS, invalid: 0, failed: 0 });
    expect(result.summary.failedEvents).toEqual([]);
  });

  it('checks every event in tolerance mode, and every event agrees', () => {
    const check = result.summary.check;
    expect(check.mode).toBe('tolerance');
    expect(check.checked).toBe(EVENTS);
    expect(check.agreeing).toBe(EVENTS);
    expect(check.disagreeing).toBe(0);
    expect(check.tolerance?.agreement).toBe(1);
    // a check over events without jets would pass for any program
    expect(result.summary.jets).toBeGreaterThan(EVENTS);
  });

  it('reports the program\'s own time below the round trip jetlag measures, at every percentile', () => {
    const service = result.summary.latency.service;
    const roundTrip = result.summary.latency.roundTrip!;
    expect(service.count).toBe(EVENTS);
    expect(roundTrip.count).toBe(EVENTS);
    expect(service.p50_us!).toBeGreaterThan(0);
    for (const percentile of ['p50_us', 'p90_us', 'p99_us'] as const) {
      expect(service[percentile]!, percentile).toBeLessThan(roundTrip[percentile]!);
    }
  });

  it('names the tolerance mode in its text report', () => {
    expect(result.stdout).toContain(`check: tolerance mode (spec section 7), not bit for bit: ${EVENTS} of ${EVENTS} events agree (100.00%)`);
  });
});
