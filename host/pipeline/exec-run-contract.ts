// What a run with an engine program (`run --engine exec:…`) adds to the worker contract
// (worker-contract.ts): the program to start in each worker, how its answers are checked, and
// what a batch reports beside the usual result. Kept apart so the contract's layouts stay as
// they are: the exec figures are small plain fields of BatchResult.exec.

import type { ToleranceSettings } from '../validate/tolerance-compare.js';
import type { ToleranceFigures } from '../measure/program-figures.js';
import type { ProgramCpu } from './exec-cpu.js';

/** WorkerConfig.exec: each worker starts this program as its engine (exec-engine.ts). */
export interface ExecWorkerConfig {
  argv: string[];
  /** how lines name the program: exec: and the command as given */
  label: string;
  timeoutMs: number;
  maxRestarts: number;
  /** null: --check compares bit for bit; else tolerance mode (spec section 7) */
  tolerance: ToleranceSettings | null;
  /** the main thread's table of running programs' process groups, killed at its exit (exec-groups.ts) */
  groups?: SharedArrayBuffer;
  /** --engine-in-flight: events written to the program ahead of its answers (absent: 1) */
  maxInFlight?: number;
  /** --program-cpu: same holds each worker thread and its program on one CPU (exec-cpu.ts); absent: any */
  programCpu?: ProgramCpu;
  /** the run's seat table that numbers the workers for --program-cpu same (exec-cpu.ts) */
  programSeats?: SharedArrayBuffer;
}

/** the failure reason of the events after the program used up its restarts (or could not be started) */
export const ENGINE_STOPPED = 'engine-stopped';

/** An event the program failed on (it exited, hung, broke the contract or refused it). */
export interface ExecFailedEvent {
  /** the event's place in its batch */
  index: number;
  event: number;
  reason: string;
  message: string;
}

/** BatchResult.exec: one batch's program figures. */
export interface ExecBatchFigures {
  /** per event of the batch: write -> answer read, ns; 0 for an event not answered */
  roundTripNs: Float64Array;
  failed: ExecFailedEvent[];
  /** restarts of this worker's program since its previous batch */
  restarts: number;
  /** the program's fault lines since the previous batch */
  faultLines: string[];
  /** tolerance mode only */
  tolerance: ToleranceFigures | null;
  /** the program used up its restarts or cannot be started: the run stops (exit 2) */
  engineError: string | null;
}
