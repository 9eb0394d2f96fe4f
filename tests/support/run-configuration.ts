// The run configuration a summary test starts from: a closed-loop run of invented events on the
// default grid, anti-kt R = 0.4, one worker, no check. A test passes what its case changes.

import type { RunConfiguration } from '../../host/measure/summary.js';

/** A plain run's configuration with `changes` laid over it (shallowly: give a whole field). */
export function testRunConfiguration(changes: Partial<RunConfiguration> = {}): RunConfiguration {
  return {
    file: 'events.jl',
    input: { label: 'invented test events', records: null },
    engine: 'wasm',
    grid: { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 },
    settings: { p: -1, radius: 0.4, ptMin: 5, threshold: 0.5, recombination: 'e' },
    workers: 1,
    batch: 8,
    arrival: { mode: 'closed', rateHz: null, seed: null },
    budgetUs: null,
    check: { mode: 'none', fraction: 0, seed: 1 },
    shard: { index: 0, count: 1 },
    maxEvents: null,
    out: null,
    ...changes,
  };
}
