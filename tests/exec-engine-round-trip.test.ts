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
    for (let event = 0; event < 4; event++) pending.push(engine.submit(event, Int32Array.of(event), Float64Array.of(1 + event)));
    const outcomes = await Promise.all(pending);
    await engine.close();
    // events 1..3 were written while the one before them was still out: counted from its
    // write, each would be about 2 x DELAY_MS (the bounds leave room for a loaded machine)
    for (const outcome of outcomes) {
      expect(outcome.ok).toBe(true);
      if (!outcome.ok) continue;
      expect(outcome.roundTripNs / 1e6).toBeGreaterThan(0.75 * DELAY_MS);
      expect(outcome.roundTripNs / 1e6).toBeLessThan(1.6 * DELAY_MS);
    }
  }, 60_000);
});
