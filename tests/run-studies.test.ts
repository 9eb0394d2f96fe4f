// --find-rate and --scan-workers: repeated runs over the same input (workers from dist/).
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { runEvents } from '../host/pipeline/run.js';
import type { RunOptions } from '../host/pipeline/run-plan.js';
import { findRate, scanWorkers } from '../host/pipeline/studies.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('studies');
const file = writeEventFile(join(dir, 'toy.events'), toyEvents(40, 41, 5));
const options: RunOptions = { input: file.path, workers: 1, batch: 4, maxEvents: 20, check: { mode: 'none', fraction: 0, seed: 1 } };

describe('the rate search', () => {
  it('with a budget no run can miss, takes the highest rate the pool sustained', async () => {
    const closed = await runEvents(options);
    const found = await findRate(options, closed, 1e9, false, 3);
    expect(found.trials.every((t) => t.withinBudget === !t.saturated && t.events === 20)).toBe(true);
    const sustained = found.trials.filter((t) => t.withinBudget).map((t) => t.rateHz);
    expect(found.rateHz).toBe(Math.max(...sustained));
  });

  it('finds no rate when even the slowest trial misses the budget, and stops there', async () => {
    const closed = await runEvents(options);
    const found = await findRate(options, closed, 0.001, true, 3);
    expect(found.rateHz).toBeNull();
    expect(found.trials).toHaveLength(1);
    expect(found.trials[0].rateHz).toBeCloseTo(0.02 * closed.throughput.eventsPerSecond, 6);
    expect(found.trials[0].p99_us).toBeGreaterThan(0.001);
  });
});

describe('the worker scan', () => {
  it('runs once per worker count and gives speedups against one worker', async () => {
    const scan = await scanWorkers(options, 2);
    expect(scan.points.map((p) => p.workers)).toEqual([1, 2]);
    expect(scan.points[0].speedup).toBe(1);
    expect(scan.points[1].speedup).toBeCloseTo(scan.points[1].eventsPerSecond / scan.points[0].eventsPerSecond, 12);
  });
});
