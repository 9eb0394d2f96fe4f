// Studies that repeat a run (runEvents, run.ts) with one setting varied: --find-rate searches the
// open-loop rate that keeps latency within a budget, --scan-workers measures throughput per
// worker count.

import type { ArrivalMode } from './arrivals.js';
import { runEvents } from './run.js';
import { engineStoppedOf } from './run-summary.js';
import { ExecEngineError } from './exec-error.js';
import { defaultWorkers, type CheckOption, type RunOptions } from './run-plan.js';
import type { FindRateResult, FindRateTrial, RunSummary, ScanWorkersPoint } from '../measure/summary.js';

const NO_CHECK: CheckOption = { mode: 'none', fraction: 0, seed: 1 };

/** A study's run whose engine program used up its restarts is no point of the study: the study stops. */
function studyRun(summary: RunSummary): RunSummary {
  const stopped = engineStoppedOf(summary);
  if (stopped !== null) throw new ExecEngineError(stopped);
  return summary;
}

/**
 * --find-rate: the highest open-loop rate whose end-to-end p99 stays within the budget and
 * which the pool sustained (a saturated rate fails whatever its p99: its queue grows without
 * bound, and a longer run would show a longer tail), by bisection in log(rate) between 2 % and
 * 100 % of the closed-loop events/s. The trials are not checked against the reference: the
 * run they start from was. They run the workers an open loop at that rate would run: --workers
 * when given, else the open loop's default (which can be fewer than the closed loop's).
 */
export async function findRate(options: RunOptions, closedLoop: RunSummary, budgetUs: number, poisson: boolean, trials = 7): Promise<FindRateResult> {
  const ceiling = Math.max(1, closedLoop.throughput.eventsPerSecond);
  const workers = options.workers ?? defaultWorkers(true);
  const result = (rateHz: number | null, atCeiling: boolean): FindRateResult => ({ budgetUs, workers, rateHz, atCeiling, trials: results });
  const runAt = async (rateHz: number): Promise<FindRateTrial> => {
    const arrival: ArrivalMode = poisson ? { kind: 'poisson', rateHz, seed: 1 } : { kind: 'fixed', rateHz };
    const summary = studyRun(await runEvents({ ...options, workers, arrival, check: NO_CHECK, out: null, repro: null, progress: null, onProblem: undefined }));
    const p99 = summary.latency.endToEnd.p99_us;
    const saturated = summary.saturation?.saturated ?? false;
    return { rateHz, p99_us: p99, saturated, withinBudget: p99 !== null && p99 <= budgetUs && !saturated, events: summary.events.read };
  };
  const results: FindRateTrial[] = [];
  let low = ceiling * 0.02;
  let high = ceiling;
  const lowTrial = await runAt(low);
  results.push(lowTrial);
  if (!lowTrial.withinBudget) return result(null, false);
  let best = low;
  const highTrial = await runAt(high);
  results.push(highTrial);
  // the closed loop's capacity passed too: the rate sought may lie higher, unsearched
  if (highTrial.withinBudget) return result(high, true);
  for (let k = 2; k < trials; k++) {
    const mid = Math.sqrt(low * high);
    const trial = await runAt(mid);
    results.push(trial);
    if (trial.withinBudget) { best = mid; low = mid; } else high = mid;
  }
  return result(best, false);
}

/** --scan-workers: closed-loop events/s for 1 .. cores workers. */
export async function scanWorkers(options: RunOptions, cores: number) {
  const points: ScanWorkersPoint[] = [];
  for (let workers = 1; workers <= cores; workers++) {
    const summary = studyRun(await runEvents({ ...options, workers, arrival: { kind: 'closed' }, check: NO_CHECK, out: null, repro: null, progress: null, onProblem: undefined }));
    const eventsPerSecond = summary.throughput.eventsPerSecond;
    points.push({
      workers,
      eventsPerSecond,
      speedup: points.length ? eventsPerSecond / points[0].eventsPerSecond : 1,
      // a closed loop has no end-to-end figure: service time is what it measures per event
      service_p50_us: summary.latency.service.p50_us,
      service_mean_us: summary.latency.service.mean_us,
    });
  }
  return { points };
}
