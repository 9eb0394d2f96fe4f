// Studies that repeat a run (runEvents, run.ts) with one setting varied: --find-rate searches the
// open-loop rate that keeps latency within a budget, --scan-workers measures throughput per
// worker count.

import type { ArrivalMode } from './arrivals.js';
import { runEvents } from './run.js';
import type { CheckOption, RunOptions } from './run-plan.js';

const NO_CHECK: CheckOption = { mode: 'none', fraction: 0, seed: 1 };
import type { RunSummary } from '../measure/summary.js';

/**
 * --find-rate: the highest open-loop rate whose end-to-end p99 stays within the budget and
 * which the pool sustained (a saturated rate fails whatever its p99: its queue grows without
 * bound, and a longer run would show a longer tail), by bisection in log(rate) between 2 % and
 * 100 % of the closed-loop events/s. The trials are not checked against the reference: the
 * run they start from was.
 */
export async function findRate(options: RunOptions, closedLoop: RunSummary, budgetUs: number, poisson: boolean, trials = 7) {
  const ceiling = Math.max(1, closedLoop.throughput.eventsPerSecond);
  const runAt = async (rateHz: number) => {
    const arrival: ArrivalMode = poisson ? { kind: 'poisson', rateHz, seed: 1 } : { kind: 'fixed', rateHz };
    // the workers of the closed-loop run whose events/s set the search's range
    const summary = await runEvents({ ...options, workers: closedLoop.configuration.workers, arrival, check: NO_CHECK, out: null, repro: null, progress: null, onProblem: undefined });
    const p99 = summary.latency.endToEnd.p99_us;
    const saturated = summary.saturation?.saturated ?? false;
    return { rateHz, p99_us: p99, saturated, withinBudget: p99 !== null && p99 <= budgetUs && !saturated, events: summary.events.read };
  };
  const results: { rateHz: number; p99_us: number | null; saturated: boolean; withinBudget: boolean; events: number }[] = [];
  let low = ceiling * 0.02;
  let high = ceiling;
  const lowTrial = await runAt(low);
  results.push(lowTrial);
  if (!lowTrial.withinBudget) return { budgetUs, rateHz: null, trials: results };
  let best = low;
  const highTrial = await runAt(high);
  results.push(highTrial);
  if (highTrial.withinBudget) return { budgetUs, rateHz: high, trials: results };
  for (let k = 2; k < trials; k++) {
    const mid = Math.sqrt(low * high);
    const trial = await runAt(mid);
    results.push(trial);
    if (trial.withinBudget) { best = mid; low = mid; } else high = mid;
  }
  return { budgetUs, rateHz: best, trials: results };
}

/** --scan-workers: closed-loop events/s for 1 .. cores workers. */
export async function scanWorkers(options: RunOptions, cores: number) {
  const points: { workers: number; eventsPerSecond: number; speedup: number; cluster_p50_us: number | null; endToEnd_p99_us: number | null }[] = [];
  for (let workers = 1; workers <= cores; workers++) {
    const summary = await runEvents({ ...options, workers, arrival: { kind: 'closed' }, check: NO_CHECK, out: null, repro: null, progress: null, onProblem: undefined });
    const eventsPerSecond = summary.throughput.eventsPerSecond;
    points.push({
      workers,
      eventsPerSecond,
      speedup: points.length ? eventsPerSecond / points[0].eventsPerSecond : 1,
      cluster_p50_us: summary.latency.service.p50_us,
      endToEnd_p99_us: summary.latency.endToEnd.p99_us,
    });
  }
  return { points };
}
