// The summary at the end of a run (run.ts has the steps of a run).

import type { InputError } from '../errors.js';
import type { RecordFeed } from './run-feed.js';
import type { RunDelivery } from './run-delivery.js';
import type { OpenLoopFeed } from './open-loop-feed.js';
import { checkFractionOf, type RunOptions, type RunPlan } from './run-plan.js';
import { describeMachine, renderSummary, type RunConfiguration, type RunSummary } from '../measure/summary.js';
import type { Grid } from '../types.js';

/** The run's summary, with the input error that cut it short (if any) kept off the JSON. */
export function summarize(options: RunOptions, plan: RunPlan, delivery: RunDelivery, feed: RecordFeed | OpenLoopFeed, run: { grid: Grid; inputLabel: string; wallSeconds: number }): RunSummary {
  const { arrival, check, shard } = plan;
  const configuration: RunConfiguration = {
    file: plan.label,
    engine: delivery.engineName,
    grid: { ...run.grid },
    settings: { ...plan.settings },
    ...(plan.pileup ? { pileup: plan.pileup } : {}),
    ...(plan.grooming ? { grooming: plan.grooming } : {}),
    workers: plan.workers,
    ...(options.program ? { programCpu: options.program.programCpu ?? 'any', engineInFlight: options.program.maxInFlight ?? 1 } : {}),
    batch: plan.batch,
    arrival: {
      mode: arrival.kind,
      rateHz: arrival.kind === 'closed' ? null : arrival.rateHz,
      seed: arrival.kind === 'poisson' ? arrival.seed : null,
    },
    budgetUs: plan.budgetUs,
    check: { mode: check.mode, fraction: checkFractionOf(check), seed: check.seed },
    shard,
    maxEvents: options.maxEvents ?? null,
    out: options.out ?? null,
    // what tells one input from another when shards are merged (paths differ between nodes)
    input: { label: run.inputLabel, records: feed.partialReason === null ? feed.records : null },
  };
  const summary = renderSummary(delivery.tally, {
    configuration,
    shards: [shard],
    machine: describeMachine(),
    partial: feed.partialReason !== null,
    partialReason: feed.partialReason,
    wallSeconds: run.wallSeconds,
  });
  if (feed.inputError) Object.defineProperty(summary, 'inputError', { value: feed.inputError, enumerable: false });
  if (delivery.engineStopped !== null) Object.defineProperty(summary, 'engineStopped', { value: delivery.engineStopped, enumerable: false });
  return summary;
}

/** The input error that cut a run short, if any (kept off the JSON). */
export function inputErrorOf(summary: RunSummary): InputError | null {
  return (summary as unknown as { inputError?: InputError }).inputError ?? null;
}

/** partialReason of a run whose engine program used up its restarts: the program's own error line, which ends with its last fault's */
export function engineStoppedReason(message: string): string {
  return `the engine program stopped: ${message}; reading stopped, batches in flight drained`;
}

/** The error of an engine program that used up its restarts and stopped the run, if any (kept off the JSON). */
export function engineStoppedOf(summary: RunSummary): string | null {
  return (summary as unknown as { engineStopped?: string }).engineStopped ?? null;
}
