// `jetlag run --engine exec: --engine-in-flight N` through the command line (real workers,
// dist/): a program that skips an event, or holds one back for the next, is seen as an answer
// out of order (one line naming the program, the event and the byte of its output) when two
// events are in flight, and as a timeout with the default one; either way the events after it
// go on and the counts add up. An open loop with two in flight runs as with one. The program
// is tests/fixtures/engines/faulty-engine.mjs.

import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { RunSummary } from '../host/measure/summary.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const CLI = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const dir = tempDirForSuite('exec-run-in-flight-cli');
const EVENTS = 40;
const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(EVENTS, 8, 2)).path;

function run(name: string, mode: string, event: number, extra: string[]): { status: number | null; stderr: string; summary: RunSummary } {
  const json = join(dir, `${name}.json`);
  const program = `exec:"${process.execPath}" "${FIXTURE}" ${mode} ${event}`;
  const result = spawnSync(process.execPath, [CLI, 'run', input, '--engine', program, '--workers', '1', '--batch', '8', '--check', 'none', '--engine-timeout-ms', '1000', '--json', json, '-q', ...extra],
    { encoding: 'utf8', timeout: 120_000 });
  expect(result.error).toBeUndefined();
  return { status: result.status, stderr: result.stderr, summary: JSON.parse(readFileSync(json, 'utf8')) as RunSummary };
}

function failedOf(summary: RunSummary): [number, string][] {
  return summary.failedEvents!.map((entry) => [entry.event, entry.reason]);
}

function countsAddUp(summary: RunSummary): void {
  const { read, ok, failed, invalid } = summary.events;
  expect(read).toBe(EVENTS);
  expect(ok + failed + invalid).toBe(read);
}

describe('run --engine exec: --engine-in-flight', () => {
  it('2: a skipped event is an answer out of order, named with the output byte, and the run goes on', () => {
    const { status, stderr, summary } = run('skip-2', 'skip', 12, ['--engine-in-flight', '2']);
    expect(status).toBe(1);
    expect(stderr).toMatch(/exec:"[^"]+" "[^"]+" skip 12, event 12: output byte \d+: answered event 13 where event 12 was due/);
    // event 13 was in flight behind it and fails with it
    expect(failedOf(summary)).toEqual([[12, 'malformed'], [13, 'malformed']]);
    expect(summary.events.ok).toBe(EVENTS - 2);
    countsAddUp(summary);
    expect(summary.configuration.engineInFlight).toBe(2);
  }, 120_000);

  it('2: an event held back for the next is an answer out of order too', () => {
    const { stderr, summary } = run('swap-2', 'swap', 20, ['--engine-in-flight', '2']);
    expect(stderr).toMatch(/swap 20, event 20: output byte \d+: answered event 21 where event 20 was due/);
    expect(failedOf(summary)).toEqual([[20, 'malformed'], [21, 'malformed']]);
    countsAddUp(summary);
  }, 120_000);

  it('1 (the default): a skipped event is a timeout', () => {
    const { stderr, summary } = run('skip-1', 'skip', 12, []);
    expect(stderr).toContain('skip 12, event 12: no answer within 1000 ms (timed out); killed');
    expect(failedOf(summary)).toEqual([[12, 'timed-out']]);
    countsAddUp(summary);
    expect(summary.configuration.engineInFlight).toBe(1);
  }, 120_000);

  it('1 (the default): an event held back for the next is a timeout', () => {
    const { stderr, summary } = run('swap-1', 'swap', 20, []);
    expect(stderr).toContain('swap 20, event 20: no answer within 1000 ms (timed out); killed');
    expect(failedOf(summary)).toEqual([[20, 'timed-out']]);
    countsAddUp(summary);
  }, 120_000);

  it('2 in an open loop: every event is answered and timed', () => {
    const { status, summary } = run('open-2', 'well', -1, ['--engine-in-flight', '2', '--rate', '2000']);
    expect(status).toBe(0);
    expect(summary.events.ok).toBe(EVENTS);
    countsAddUp(summary);
    expect(summary.latency.endToEnd.count).toBe(EVENTS);
    expect(summary.latency.roundTrip!.count).toBe(EVENTS);
  }, 120_000);

  it('refuses a count outside 1..8 as a usage error', () => {
    const result = spawnSync(process.execPath, [CLI, 'run', input, '--engine', `exec:"${process.execPath}" "${FIXTURE}" well -1`, '--engine-in-flight', '9'], { encoding: 'utf8', timeout: 30_000 });
    expect(result.status).toBe(2);
    expect(result.stderr).toContain('--engine-in-flight must be an integer from 1 to 8, got 9');
  }, 60_000);
});

describe('shards run with different --engine-in-flight', () => {
  it('are not merged: their round trips count from different starts', () => {
    const shard = (index: number, inFlight: string) => {
      const json = join(dir, `merge-${index}.json`);
      const program = `exec:"${process.execPath}" "${FIXTURE}" well -1`;
      const result = spawnSync(process.execPath, [CLI, 'run', input, '--engine', program, '--workers', '1', '--check', 'none', '--shard', `${index}/2`, '--engine-in-flight', inFlight, '--json', json, '-q'], { encoding: 'utf8', timeout: 60_000 });
      expect(result.status).toBe(0);
      return json;
    };
    const paths = [shard(0, '1'), shard(1, '2')];
    const merged = spawnSync(process.execPath, [CLI, 'merge', ...paths], { encoding: 'utf8', timeout: 60_000 });
    expect(merged.status).not.toBe(0);
    expect(merged.stderr).toMatch(/configuration differs from .*merge-0\.json: --engine-in-flight is 2, there 1/);
  }, 120_000);
});
