// --find-rate and --scan-workers: repeated runs over the same input (workers from dist/).
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { runEvents } from '../host/pipeline/run.js';
import { defaultWorkers, type RunOptions } from '../host/pipeline/run-plan.js';
import { findRate, scanWorkers } from '../host/pipeline/studies.js';
import { formatReport } from '../host/measure/report.js';
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
    expect(found.atCeiling).toBe(false);
    expect(found.trials).toHaveLength(1);
    expect(found.trials[0].rateHz).toBeCloseTo(0.02 * closed.throughput.eventsPerSecond, 6);
    expect(found.trials[0].p99_us).toBeGreaterThan(0.001);
  });
});

describe('the rate search\'s workers and ceiling', () => {
  it('runs the trials with the open loop\'s default workers when --workers is not given, and says how many', async () => {
    const { workers: _given, ...unset } = options;
    const closed = await runEvents(options);
    const found = await findRate({ ...unset, maxEvents: 10 }, { ...closed, throughput: { ...closed.throughput, eventsPerSecond: 1000 } }, 1e9, false, 2);
    expect(found.workers).toBe(defaultWorkers(true));
  });

  it('when the highest rate tried passes, gives it as a lower bound at the search\'s ceiling', async () => {
    const closed = await runEvents(options);
    // Trials of one event each: the open loop judges a sustained rate only from two returns or
    // more, so a trial of one has none to fall short and no stall of the machine can make it
    // count as saturated (a 10-event trial at 1000 Hz lasts 10 ms, and a few ms of stall did);
    // the budget, 1e9 µs, no run misses. So the ceiling's trial passes, and what is checked is
    // the search's answer to that. That a saturated trial fails is the first test's check.
    const found = await findRate({ ...options, maxEvents: 1 }, { ...closed, throughput: { ...closed.throughput, eventsPerSecond: 1000 } }, 1e9, false, 5);
    expect(found.workers).toBe(1);
    expect(found.trials.map((t) => [t.rateHz, t.events, t.withinBudget])).toEqual([[20, 1, true], [1000, 1, true]]);
    expect(found).toMatchObject({ rateHz: 1000, atCeiling: true });
    expect(formatReport({ ...closed, findRate: found })).toContain('find-rate   p99 within 1000000000 µs up to at least 1,000 Hz (the search\'s ceiling');
  });

});

describe('the worker scan', () => {
  it('runs once per worker count and gives speedups against one worker', async () => {
    const scan = await scanWorkers(options, 2);
    expect(scan.points.map((p) => p.workers)).toEqual([1, 2]);
    expect(scan.points[0].speedup).toBe(1);
    expect(scan.points[1].speedup).toBeCloseTo(scan.points[1].eventsPerSecond / scan.points[0].eventsPerSecond, 12);
  });

  it('gives each point\'s service time, the closed loop\'s per-event figure, and no end-to-end', async () => {
    const scan = await scanWorkers(options, 1);
    expect(Object.keys(scan.points[0]).sort()).toEqual(['eventsPerSecond', 'service_mean_us', 'service_p50_us', 'speedup', 'workers']);
    expect(scan.points[0].service_p50_us).toBeGreaterThan(0);
    expect(scan.points[0].service_mean_us).toBeGreaterThan(0);
  });
});
