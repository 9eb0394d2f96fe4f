import { describe, expect, it } from 'vitest';
import { combineMachineLoads, judgeMachineLoad } from '../host/measure/machine-load.js';
import { describeMachine, renderSummary, type RunConfiguration } from '../host/measure/summary.js';
import { formatReport } from '../host/measure/report.js';
import { RunTally } from '../host/measure/run-tally.js';

const quiet = { cores: 2, loadAverageStart: 0.5, loadAverageEnd: 2.4, cpuSeconds: 3.9, wallSeconds: 2, workerBusySeconds: 3.8 };

describe('the machine as measured', () => {
  it('is not busy when the load beyond the run\'s own threads stays within the cores and workers got their CPU', () => {
    expect(judgeMachineLoad(quiet)).toMatchObject({ busy: false, busyReason: null });
  });

  it('is busy when the load before the run exceeded the cores', () => {
    const load = judgeMachineLoad({ ...quiet, loadAverageStart: 6.5 });
    expect(load.busy).toBe(true);
    expect(load.busyReason).toBe('load average 6.50 before the run on 2 cores');
  });

  it('is busy when the workers got markedly less CPU than the wall time they spent on events', () => {
    const load = judgeMachineLoad({ ...quiet, cpuSeconds: 2.0 });
    expect(load.busy).toBe(true);
    expect(load.busyReason).toBe('the process got 2.00 s of CPU for 3.80 s its workers spent on events');
  });

  it('is busy when the serving threads waited for a CPU more than a tenth of their time serving', () => {
    expect(judgeMachineLoad({ ...quiet, workerCpuWaitSeconds: 0.3, workerServeSeconds: 4 }).busy).toBe(false);
    const load = judgeMachineLoad({ ...quiet, workerCpuWaitSeconds: 0.5, workerServeSeconds: 4 });
    expect(load.busy).toBe(true);
    expect(load.busyReason).toBe('the workers waited 0.50 s for a CPU in 4.00 s of serving');
  });

  it('of shards adds the workers\' wait for a CPU when both measured it', () => {
    const waited = (seconds: number) => judgeMachineLoad({ ...quiet, workerCpuWaitSeconds: seconds, workerServeSeconds: 4 });
    const both = combineMachineLoads(waited(0.1), waited(0.2));
    expect(both.workerCpuWaitSeconds).toBeCloseTo(0.3, 9);
    expect(both.workerServeSeconds).toBe(8);
    expect(combineMachineLoads(waited(0.1), judgeMachineLoad(quiet)).workerCpuWaitSeconds).toBeUndefined();
  });

  it('of shards is busy when one shard was', () => {
    const combined = combineMachineLoads(judgeMachineLoad(quiet), judgeMachineLoad({ ...quiet, loadAverageStart: 6.5 }));
    expect(combined.busy).toBe(true);
    expect(combined.cpuSeconds).toBe(7.8);
  });

  it('is said in the report when busy', () => {
    const tally = new RunTally();
    tally.machineLoad = judgeMachineLoad({ ...quiet, loadAverageStart: 6.5 });
    const configuration = {
      file: 'x.events', engine: 'wasm', grid: { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 },
      settings: { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' }, workers: 2, batch: 32,
      arrival: { mode: 'closed', rateHz: null, seed: null }, budgetUs: null, check: { mode: 'none', fraction: 0, seed: 1 },
      shard: { index: 0, count: 1 }, maxEvents: null, out: null, input: { label: 'test', records: 0 },
    } as RunConfiguration;
    const summary = renderSummary(tally, { configuration, shards: [{ index: 0, count: 1 }], machine: describeMachine(), partial: false, partialReason: null, wallSeconds: 2 });
    expect(formatReport(summary)).toContain('  BUSY        figures taken on a busy machine: load average 6.50 before the run on 2 cores');
  });
});
