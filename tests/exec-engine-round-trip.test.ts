// What an engine program's round trip counts with several events in flight
// (host/pipeline/exec-process.ts): from when the program could start on the event, the later of
// its write and the previous answer's arrival, not from its write, which would add the time it
// queued behind the event before it. The program (tests/fixtures/engines/faulty-engine.mjs,
// mode slow) takes DELAY_MS over each event, one at a time.

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ExecEngine, type ExecOutcome } from '../host/pipeline/exec-engine.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const DELAY_MS = 300;

describe('an engine program\'s round trip with two events in flight', () => {
  it('is about the program\'s time per event, not twice it', async () => {
    const engine = await ExecEngine.start({
      argv: [process.execPath, FIXTURE, 'slow', String(DELAY_MS)], label: 'exec:faulty-engine slow',
      grid: DEFAULT_GRID, settings: { ...DEFAULT_SETTINGS }, producer: 'jetlag tests', timeoutMs: 10_000, maxRestarts: 0, maxInFlight: 2,
    });
    const pending: Promise<ExecOutcome>[] = [];
    const startNs = process.hrtime.bigint();
    for (let event = 0; event < 4; event++) pending.push(engine.submit(event, Int32Array.of(event), Float64Array.of(1 + event)));
    const outcomes = await Promise.all(pending);
    const wallNs = Number(process.hrtime.bigint() - startNs);
    await engine.close();
    const roundTripsNs: number[] = [];
    for (const outcome of outcomes) {
      expect(outcome.ok).toBe(true);
      if (outcome.ok) roundTripsNs.push(outcome.roundTripNs);
    }
    const sumNs = roundTripsNs.reduce((sum, ns) => sum + ns, 0);
    // Compared as sums, which no stall can tip (per-event bounds can: a 180 ms stall of either
    // process moves one round trip by that much). Counted from the later of its write and the
    // previous answer, one program's round trips never overlap and lie inside the wall time:
    // their sum is at most it, however late either side runs. Counted from the write, events
    // 1..3 would each overlap the one before by about DELAY_MS, and the sum would exceed the
    // wall time by about 3 x DELAY_MS; a host stall between an answer and the next write takes
    // that much off only by lasting DELAY_MS itself.
    expect(sumNs).toBeLessThanOrEqual(wallNs);
    // ... and the program is busy from the first write to the last answer, DELAY_MS per event
    // (a timed wait, which may end a little early: the 5 % is for that, not for load)
    expect(sumNs / 1e6).toBeGreaterThan(0.95 * 4 * DELAY_MS);
  }, 60_000);
});
