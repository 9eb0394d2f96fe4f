// Whether a run passed, for its exit status: a trigger's CI gates on it. A run fails when no
// event was clustered (there is no latency to speak of, whatever the counts say), or when a
// criterion the user set is not met.

import type { RunSummary } from './summary.js';

export interface RunCriteria {
  /** budget misses above this fraction of the clustered events fail the run; null: no criterion */
  maxMissFraction: number | null;
}

/** One line per reason the run failed (empty: it passed), each saying what was measured against what. */
export function runFailures(summary: RunSummary, criteria: RunCriteria): string[] {
  const failures: string[] = [];
  const e = summary.events;
  if (e.ok === 0) {
    failures.push(`no event was clustered (${e.read} read: ${e.invalid} invalid, ${e.failed} in failed batches)`);
  }
  const budget = summary.budget;
  if (criteria.maxMissFraction !== null && budget !== null && e.ok > 0 && budget.fractionOver > criteria.maxMissFraction) {
    failures.push(`${budget.over} of ${e.ok} events (${(budget.fractionOver * 100).toFixed(3)} %) missed the ${budget.budgetUs} µs budget on ${budget.measuredOn}, more than --max-miss-fraction ${criteria.maxMissFraction} allows`);
  }
  return failures;
}
