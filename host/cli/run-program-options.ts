// `jetlag run --engine exec:'COMMAND ARGS…'`: the options of an engine program in a run (its
// timeout and restarts, and the tolerance mode of its check), parsed into the worker's
// ExecWorkerConfig. The command is split here, on the main thread, so that a usage error in
// it comes before any worker starts.

import { UsageError } from '../errors.js';
import type { OptionSpec, ParsedArgs } from './args.js';
import { DEFAULT_ENGINE_RESTARTS, DEFAULT_ENGINE_TIMEOUT_MS, defaultEngineTimeoutMs } from '../pipeline/exec-engine.js';
import { execCommandOf, splitCommand } from '../pipeline/exec-command.js';
import type { ExecWorkerConfig } from '../pipeline/exec-run-contract.js';
import { parseProgramCpu } from '../pipeline/exec-cpu.js';
import { PROGRAM_CPU_OPTION } from './program-cpu-options.js';
import { DEFAULT_TOLERANCE, checkToleranceSettings, type ToleranceSettings } from '../validate/tolerance-compare.js';

const MIN_IN_FLIGHT = 1;
/** enough to see answers out of order and to keep a program busy; more only deepens its queue */
const MAX_IN_FLIGHT = 8;

/** --engine-in-flight (run and cluster): 1 when not given; UsageError outside 1..8. */
export function parseEngineInFlight(value: number | undefined, command: string): number {
  if (value === undefined) return MIN_IN_FLIGHT;
  if (!(Number.isInteger(value) && value >= MIN_IN_FLIGHT && value <= MAX_IN_FLIGHT)) {
    throw new UsageError(`${command}: --engine-in-flight must be an integer from ${MIN_IN_FLIGHT} to ${MAX_IN_FLIGHT}, got ${value}`);
  }
  return value;
}

export const RUN_PROGRAM_OPTIONS: OptionSpec[] = [
  { name: 'engine-timeout-ms', kind: 'integer', argument: '<ms>', description: `exec: engines: how long the program may take for one event before it is killed and restarted (default: 100 x --budget-us, else ${DEFAULT_ENGINE_TIMEOUT_MS})` },
  { name: 'engine-restarts', kind: 'integer', argument: '<n>', description: `exec: engines: how often a failing program is restarted (per worker) before the run stops (default: ${DEFAULT_ENGINE_RESTARTS})` },
  { name: 'engine-in-flight', kind: 'integer', argument: '<n>', description: `exec: engines: how many events jetlag writes to the program ahead of its answers, ${MIN_IN_FLIGHT}..${MAX_IN_FLIGHT}; with 1 a skipped or held-back event is seen as a timeout, with more as an answer out of order (default: 1)` },
  PROGRAM_CPU_OPTION,
  { name: 'tolerance', kind: 'flag', description: 'exec: engines: --check compares in tolerance mode (clustering spec section 7; jets with pt >= --ptmin must agree) instead of bit for bit' },
  { name: 'match-r', kind: 'number', argument: '<dR>', description: `with --tolerance: a program's jet matches a reference jet when closer than this in (y, phi) (default: ${DEFAULT_TOLERANCE.matchR})` },
  { name: 'pt-tol', kind: 'number', argument: '<x>', description: `with --tolerance: a matched pair agrees when |pt_program / pt_reference - 1| <= this (default: ${DEFAULT_TOLERANCE.ptTol})` },
  { name: 'angle-tol', kind: 'number', argument: '<dR>', description: `with --tolerance: ... and when its distance in (y, phi) <= this (default: ${DEFAULT_TOLERANCE.angleTol})` },
];

const PROGRAM_ONLY = ['engine-timeout-ms', 'engine-restarts', 'engine-in-flight', 'program-cpu', 'tolerance', 'match-r', 'pt-tol', 'angle-tol'];

/**
 * The engine program of a run, or null when --engine is not exec:…; UsageError on a bad
 * command, on a program option without exec:, and on a bad tolerance.
 */
export function runProgramFrom(args: ParsedArgs, engineText: string | undefined, budgetUs: number | null, ptMin: number): ExecWorkerConfig | null {
  const command = engineText === undefined ? null : execCommandOf(engineText);
  if (command === null) {
    const given = PROGRAM_ONLY.filter((name) => args.values[name] !== undefined);
    if (given.length > 0) throw new UsageError(`run: --${given.join(', --')} apply to --engine exec: only`);
    return null;
  }
  const argv = splitCommand(command, 'run');
  const timeoutMs = (args.values['engine-timeout-ms'] as number | undefined) ?? defaultEngineTimeoutMs(budgetUs === null ? null : budgetUs * 1000);
  const maxRestarts = (args.values['engine-restarts'] as number | undefined) ?? DEFAULT_ENGINE_RESTARTS;
  if (!(timeoutMs >= 1)) throw new UsageError(`run: --engine-timeout-ms must be at least 1, got ${timeoutMs}`);
  if (!(maxRestarts >= 0)) throw new UsageError(`run: --engine-restarts must be 0 or more, got ${maxRestarts}`);
  const maxInFlight = parseEngineInFlight(args.values['engine-in-flight'] as number | undefined, 'run');
  const programCpu = parseProgramCpu(args.values['program-cpu'] as string | undefined, 'run');
  let tolerance: ToleranceSettings | null = null;
  if (args.values.tolerance === true) {
    tolerance = {
      ptMin,
      matchR: (args.values['match-r'] as number | undefined) ?? DEFAULT_TOLERANCE.matchR,
      ptTol: (args.values['pt-tol'] as number | undefined) ?? DEFAULT_TOLERANCE.ptTol,
      angleTol: (args.values['angle-tol'] as number | undefined) ?? DEFAULT_TOLERANCE.angleTol,
    };
    try {
      checkToleranceSettings(tolerance);
    } catch (error) {
      throw new UsageError(`run: ${(error as Error).message}`);
    }
  } else if (['match-r', 'pt-tol', 'angle-tol'].some((name) => args.values[name] !== undefined)) {
    throw new UsageError('run: --match-r, --pt-tol and --angle-tol need --tolerance');
  }
  return { argv, label: engineText!, timeoutMs, maxRestarts, tolerance, programCpu, maxInFlight };
}
