// Worker threads that die at random points of a run (the fault worker's JETLAG_TEST_KILL): the
// run finishes, every event is accounted for, the batches hit are listed as failed, and the
// pool replaces each dead thread (more threads die than the pool ever had).
import { afterEach, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { runEvents } from '../host/pipeline/run.js';
import { killsBatch } from './support/kill-points.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const faultWorker = join(import.meta.dirname, '..', 'dist', 'tests', 'support', 'fault-worker.js');
const PER_MILLE = 250;
const SEED = 5;
const BATCH = 10;
const WORKERS = 2;

let restore: (() => void) | null = null;
afterEach(() => { restore?.(); restore = null; });

describe('a run whose worker threads are killed', () => {
  const dir = tempDirForSuite('kills');
  const events = toyEvents(400, 23, 3);
  const file = writeEventFile(join(dir, 'toy.events'), events);

  it('finishes with ok + invalid + failed = read, lists the batches hit, and keeps replacing threads', async () => {
    const before = process.env.JETLAG_TEST_KILL;
    process.env.JETLAG_TEST_KILL = `${PER_MILLE}:${SEED}`;
    restore = () => { if (before === undefined) delete process.env.JETLAG_TEST_KILL; else process.env.JETLAG_TEST_KILL = before; };
    // the first records of the batches whose thread the hook kills part way (batches go out in file order)
    const hitBatches: number[] = [];
    for (let batch = 0; batch * BATCH < events.length; batch++) if (killsBatch(batch, PER_MILLE, SEED)) hitBatches.push(batch * BATCH);
    expect(hitBatches.length).toBeGreaterThan(2 * WORKERS);
    expect(hitBatches.length).toBeLessThan(events.length / BATCH);

    const summary = await runEvents({ input: file.path, workers: WORKERS, batch: BATCH, check: { mode: 'none', fraction: 0, seed: 1 }, workerFile: faultWorker });
    const failed = hitBatches.length * BATCH;
    expect(summary.events).toEqual({ read: events.length, ok: events.length - failed, invalid: 0, failed });
    expect(summary.partial).toBe(false);
    expect(summary.failedBatches.map((batch) => batch.firstRecord).sort((a, b) => a - b)).toEqual(hitBatches);
    expect(summary.failedBatches.map((batch) => batch.offset).sort((a, b) => a - b)).toEqual(hitBatches.map((first) => file.offsets[first]));
    for (const batch of summary.failedBatches) {
      expect(batch.events).toBe(BATCH);
      expect(batch.reason).toMatch(/exit/i);
    }
  });
});
