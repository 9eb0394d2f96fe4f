// The main thread's side of an engine program's batch figures (exec-run-contract.ts): its
// restarts and fault lines, tolerance mode's sums, and the events it failed on, tallied
// beside what run-delivery.ts tallies for every engine.

import { addToleranceFigures, emptyToleranceFigures } from '../measure/program-figures.js';
import type { RunTally } from '../measure/run-tally.js';
import type { ExecBatchFigures, ExecFailedEvent } from './exec-run-contract.js';

/** The failed events of a batch by their place in it; null when the batch had none (or no program). */
export function failedByIndex(figures: ExecBatchFigures | undefined): Map<number, ExecFailedEvent> | null {
  if (!figures || figures.failed.length === 0) return null;
  const byIndex = new Map<number, ExecFailedEvent>();
  for (const entry of figures.failed) byIndex.set(entry.index, entry);
  return byIndex;
}

/** One batch's program figures into the tally; the fault lines go out as problems. */
export function tallyProgramBatch(tally: RunTally, figures: ExecBatchFigures, problem: (line: string) => void): void {
  tally.engineRestarts += figures.restarts;
  for (const line of figures.faultLines) problem(line);
  if (figures.tolerance) {
    if (!tally.tolerance) tally.tolerance = emptyToleranceFigures();
    addToleranceFigures(tally.tolerance, figures.tolerance);
  }
}
