// A batch through an engine program with two events in flight (host/pipeline/exec-batch.ts):
// every answer of the batch is read before the checks start, so a check slower than
// --engine-timeout-ms neither adds to the last event's round trip nor lets the watchdog kill a
// program that had answered. The reference is wrapped to take CHECK_MS per event, twice the
// timeout; the program is tests/fixtures/engines/faulty-engine.mjs, mode slow (PROGRAM_MS per
// event, so that the last answer comes in after the one before it was read).

import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { execWorkerOf, finishExecBatch } from '../host/pipeline/exec-batch.js';
import { readBatch } from '../host/pipeline/cluster-batch.js';
import { BatchBuilder } from '../host/pipeline/pool.js';
import { encodeEventRecord } from '../host/formats/event-codec.js';
import type { ExecWorkerConfig } from '../host/pipeline/exec-run-contract.js';
import type { WorkerConfig } from '../host/pipeline/worker-contract.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type Clusterer } from '../host/types.js';
import { toyEvents } from './support/run-files.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const TIMEOUT_MS = 150;
const CHECK_MS = 2 * TIMEOUT_MS;
const EVENTS = 4;
/** the program's time per event: each answer comes in apart from the one before */
const PROGRAM_MS = 30;

const config: WorkerConfig = {
  grid: DEFAULT_GRID, settings: { ...DEFAULT_SETTINGS }, engine: 'wasm', checkFraction: 1, checkSeed: 1, encodeJets: false,
};
const exec: ExecWorkerConfig = {
  argv: [process.execPath, FIXTURE, 'slow', String(PROGRAM_MS)], label: 'exec:faulty-engine slow',
  timeoutMs: TIMEOUT_MS, maxRestarts: 0, tolerance: null, maxInFlight: 2,
};

/** The reference, made slow: a busy wait, as a check of many towers would be. */
function slowed(reference: Clusterer): Clusterer {
  return {
    ...reference,
    cluster: (towerIndex, towerEt) => {
      const until = performance.now() + CHECK_MS;
      while (performance.now() < until);
      return reference.cluster(towerIndex, towerEt);
    },
  };
}

describe('a batch with two events in flight and checks slower than the timeout', () => {
  let close: (() => Promise<void>) | null = null;
  afterAll(async () => { await close?.(); });

  it('has every event answered, none timed out, and round trips below the timeout', async () => {
    const running = await execWorkerOf(config, exec);
    close = () => running.engine.close();
    running.state.reference = slowed(running.state.reference!);
    const builder = new BatchBuilder();
    for (const fields of toyEvents(EVENTS, 5, 2)) builder.add(encodeEventRecord(fields), 0);
    const { task } = builder.seal(0);
    running.state.validEvent = new Int32Array(task.count);
    running.state.batchStart = new Int32Array(task.count + 1);
    const result = await finishExecBatch(running, readBatch(running.state, task));
    const figures = result.exec!;
    expect(figures.failed).toEqual([]);
    expect(running.engine.counts.timedOut).toBe(0);
    expect(running.engine.counts.answered).toBe(EVENTS);
    expect(result.checked).toBe(EVENTS);
    for (let k = 0; k < EVENTS; k++) {
      // two answers taken in one read give the later a round trip of 0: it is not checked here
      expect(figures.roundTripNs[k] / 1e6).toBeLessThan(TIMEOUT_MS);
    }
  }, 60_000);
});
