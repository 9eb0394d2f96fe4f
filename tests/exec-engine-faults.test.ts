// The exec driver (host/pipeline/exec-engine.ts) against a small misbehaving program
// (tests/fixtures/engines/faulty-engine.mjs): each fault gives its one line, the events it hits
// fail with their reason, the program is restarted, the events after it go on, and the counts
// add up.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ExecEngine, ExecEngineError, type ExecEngineOptions, type ExecOutcome } from '../host/pipeline/exec-engine.js';
import { encodeStreamEvent } from '../host/pipeline/exec-stream.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { tempDirForTest } from './support/temp-dir.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');

function options(mode: string, event: number, extra: Partial<ExecEngineOptions> = {}, moreArgs: string[] = []): { options: ExecEngineOptions; faults: string[] } {
  const faults: string[] = [];
  return {
    faults,
    options: {
      argv: [process.execPath, FIXTURE, mode, String(event), ...moreArgs],
      label: `exec:faulty-engine ${mode}`,
      grid: DEFAULT_GRID,
      settings: { ...DEFAULT_SETTINGS },
      producer: 'jetlag tests',
      timeoutMs: 5000,
      maxRestarts: 3,
      onFault: (line) => faults.push(line),
      ...extra,
    },
  };
}

/** Events 0..count-1, one tower each; with maxInFlight > 1 several are submitted at once. */
async function runEvents(engine: ExecEngine, count: number): Promise<ExecOutcome[]> {
  const pending: Promise<ExecOutcome>[] = [];
  for (let event = 0; event < count; event++) {
    pending.push(engine.submit(event, Int32Array.of(event % 3200), Float64Array.of(1 + event)));
    if (pending.length % 4 === 0) await Promise.all(pending);
  }
  const outcomes = await Promise.all(pending);
  await engine.close();
  return outcomes;
}

function failedEvents(outcomes: ExecOutcome[]): number[] {
  return outcomes.filter((outcome) => !outcome.ok).map((outcome) => outcome.event);
}

function countsAddUp(engine: ExecEngine): void {
  const c = engine.counts;
  expect(c.sent).toBe(c.answered + c.refused + c.exited + c.timedOut + c.malformed);
}

describe('an engine program', () => {
  it('that behaves answers every event in order, with its own time and the round trip', async () => {
    const { options: o, faults } = options('well', -1);
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 10);
    expect(outcomes.map((outcome) => outcome.event)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
    for (const outcome of outcomes) {
      expect(outcome.ok).toBe(true);
      if (outcome.ok) {
        expect(outcome.serviceNs).toBe(1);
        expect(outcome.roundTripNs).toBeGreaterThan(0);
      }
    }
    expect(faults).toEqual([]);
    expect(engine.counts).toMatchObject({ sent: 10, answered: 10, faults: 0, restarts: 0 });
  });

  it('that crashes on event 17 fails that event with its exit status and stderr, and is restarted', async () => {
    const { options: o, faults } = options('crash', 17);
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 30);
    expect(failedEvents(outcomes)).toEqual([17]);
    const failed = outcomes[17];
    expect(failed.ok ? null : failed.reason).toBe('exited');
    expect(faults).toHaveLength(1);
    expect(faults[0]).toContain('exec:faulty-engine crash, event 17: exited with status 3');
    expect(faults[0]).toContain('"faulty-engine: giving up on event 17"');
    expect(engine.counts).toMatchObject({ sent: 30, answered: 29, exited: 1, faults: 1, restarts: 1 });
    countsAddUp(engine);
  });

  it('that writes a lot to stderr is not held up by it, and its last lines are still quoted', async () => {
    // 1 MiB per event is more than a pipe or a socket holds: the program must not wait for
    // jetlag to read it while jetlag waits for its answer
    const { options: o, faults } = options('chatty', 6, { timeoutMs: 3000 });
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 8);
    expect(failedEvents(outcomes)).toEqual([6]);
    expect(faults).toHaveLength(1);
    expect(faults[0]).toContain('exec:faulty-engine chatty, event 6: exited with status 3');
    expect(faults[0]).toContain('"faulty-engine: giving up on event 6"');
    expect(engine.counts).toMatchObject({ sent: 8, answered: 7, exited: 1, timedOut: 0, restarts: 1 });
    countsAddUp(engine);
  });

  it('that hangs on event 5 is killed after the timeout, that event failed as timed out', async () => {
    const { options: o, faults } = options('hang', 5, { timeoutMs: 1500 });
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 12);
    expect(failedEvents(outcomes)).toEqual([5]);
    const failed = outcomes[5];
    expect(failed.ok ? null : failed.reason).toBe('timed-out');
    expect(faults).toEqual(['exec:faulty-engine hang, event 5: no answer within 1500 ms (timed out); killed']);
    expect(engine.counts).toMatchObject({ sent: 12, answered: 11, timedOut: 1, restarts: 1 });
    countsAddUp(engine);
  });

  it('that hangs on event 5 with a child holding its stdout is still timed out and restarted', { timeout: 20_000 }, async () => {
    // killing the program leaves its child's copy of stdout open: the blocking read of its
    // answers must be woken by the watchdog, not by an end of file that comes 60 s later
    const pidFile = join(tempDirForTest('exec-hang-child'), 'child.pid');
    const { options: o, faults } = options('hang-child', 5, { timeoutMs: 1000 }, [pidFile]);
    const engine = await ExecEngine.start(o);
    try {
      const outcomes = await runEvents(engine, 8);
      expect(failedEvents(outcomes)).toEqual([5]);
      expect(faults).toEqual(['exec:faulty-engine hang-child, event 5: no answer within 1000 ms (timed out); killed']);
      expect(engine.counts).toMatchObject({ sent: 8, answered: 7, timedOut: 1, restarts: 1 });
      countsAddUp(engine);
    } finally {
      try { process.kill(Number(readFileSync(pidFile, 'utf8')), 'SIGKILL'); } catch { /* already gone */ }
    }
  });

  it('that stops reading with a child holding its stdin times out on an event larger than the pipe holds', { timeout: 20_000 }, async () => {
    // jetlag is then blocked in the write of the event, which no wake-up byte can end: the
    // program's whole process group is killed, so no reader is left and the write fails
    const pidFile = join(tempDirForTest('exec-stall-stdin'), 'child.pid');
    const grid = { ...DEFAULT_GRID, etaBins: 200, phiBins: 200 };
    // it answers event 1, then reads no more: event 2 fills the pipe
    const { options: o, faults } = options('stall-stdin', 1, { timeoutMs: 1000, grid }, [pidFile]);
    const towerCount = grid.etaBins * grid.phiBins;
    const towerIndex = Int32Array.from({ length: towerCount }, (_, k) => k);
    const towerEt = Float64Array.from({ length: towerCount }, (_, k) => 1.5 + k / towerCount);
    // the precondition: one event well past what a Linux pipe (64 KiB) and the program's own
    // input buffer take in before the write blocks
    expect(encodeStreamEvent(2, towerIndex, towerEt, DEFAULT_SETTINGS.threshold).length).toBeGreaterThan(4 << 16);
    const engine = await ExecEngine.start(o);
    try {
      const outcomes: ExecOutcome[] = [];
      for (let event = 0; event < 5; event++) outcomes.push(await engine.submit(event, towerIndex, towerEt));
      await engine.close();
      expect(failedEvents(outcomes)).toEqual([2]);
      expect(faults).toEqual(['exec:faulty-engine stall-stdin, event 2: no answer within 1000 ms (timed out); killed']);
      expect(engine.counts).toMatchObject({ sent: 5, answered: 4, timedOut: 1, restarts: 1 });
      countsAddUp(engine);
    } finally {
      try { process.kill(Number(readFileSync(pidFile, 'utf8')), 'SIGKILL'); } catch { /* already gone */ }
    }
  });

  it('that writes garbage is named with the event and the byte offset in its output', async () => {
    const offsetFile = join(tempDirForTest('exec-garbage'), 'offset');
    const { options: o, faults } = options('garbage', 3, {}, [offsetFile]);
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 8);
    expect(failedEvents(outcomes)).toEqual([3]);
    const offset = readFileSync(offsetFile, 'utf8');
    expect(faults).toEqual([`exec:faulty-engine garbage, event 3: output byte ${offset}: bad record length: varint longer than 10 bytes`]);
    expect(engine.counts).toMatchObject({ sent: 8, answered: 7, malformed: 1, restarts: 1 });
    countsAddUp(engine);
  });

  it('that skips an event is caught when the next answer comes back in its place', async () => {
    const { options: o, faults } = options('skip', 5, { maxInFlight: 2 });
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 12);
    // event 6 was in flight behind event 5 and fails with it
    expect(failedEvents(outcomes)).toEqual([5, 6]);
    expect(faults).toHaveLength(1);
    expect(faults[0]).toMatch(/^exec:faulty-engine skip, event 5: output byte \d+: answered event 6 where event 5 was due/);
    expect(engine.counts).toMatchObject({ sent: 12, answered: 10, malformed: 2, restarts: 1 });
    countsAddUp(engine);
  });

  it('that skips an event, with one event in flight at a time, waits for the next and times out', async () => {
    const { options: o, faults } = options('skip', 5, { timeoutMs: 1500 });
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 8);
    expect(failedEvents(outcomes)).toEqual([5]);
    expect(faults).toEqual(['exec:faulty-engine skip, event 5: no answer within 1500 ms (timed out); killed']);
    countsAddUp(engine);
  });

  it('that answers out of order is caught at the first answer out of place', async () => {
    const { options: o, faults } = options('swap', 5, { maxInFlight: 2 });
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 12);
    expect(failedEvents(outcomes)).toEqual([5, 6]);
    expect(faults).toHaveLength(1);
    expect(faults[0]).toMatch(/^exec:faulty-engine swap, event 5: output byte \d+: answered event 6 where event 5 was due/);
    expect(engine.counts).toMatchObject({ sent: 12, answered: 10, malformed: 2, restarts: 1 });
    countsAddUp(engine);
  });

  it('that leaves out the event number is named as a missing field', async () => {
    const { options: o, faults } = options('unnumbered', 4);
    const engine = await ExecEngine.start(o);
    const outcomes = await runEvents(engine, 8);
    expect(failedEvents(outcomes)).toEqual([4]);
    expect(faults).toHaveLength(1);
    expect(faults[0]).toMatch(/^exec:faulty-engine unnumbered, event 4: output byte \d+: the jets record has no event number \(field 1\)/);
    countsAddUp(engine);
  });

  it('that fails more often than --engine-restarts allows stops the run with one clear error', async () => {
    const { options: o, faults } = options('crash-all', -1, { maxRestarts: 2 });
    const engine = await ExecEngine.start(o);
    const outcomes: ExecOutcome[] = [];
    let stopped: unknown = null;
    try {
      for (let event = 0; event < 10; event++) outcomes.push(await engine.submit(event, Int32Array.of(1), Float64Array.of(1)));
    } catch (error) {
      stopped = error;
    }
    await engine.close();
    expect(stopped).toBeInstanceOf(ExecEngineError);
    expect((stopped as Error).message).toMatch(/^exec:faulty-engine crash-all failed 3 times and was restarted 2 times \(--engine-restarts 2\); last: .*event 2: exited with status 3/);
    expect(failedEvents(outcomes)).toEqual([0, 1, 2]);
    expect(faults).toHaveLength(3);
    expect(engine.counts).toMatchObject({ sent: 3, exited: 3, restarts: 2 });
    countsAddUp(engine);
  });

  it('that cannot be started gives one clear error at once', async () => {
    const missing = join(tempDirForTest('exec-missing'), 'no-such-program');
    await expect(ExecEngine.start({ ...options('well', -1).options, argv: [missing], label: `exec:${missing}` })).rejects.toThrow(
      `exec:${missing}: cannot start the program: spawn ${missing} ENOENT`,
    );
  });
});
