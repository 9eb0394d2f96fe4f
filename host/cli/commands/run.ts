// jetlag run EVENTS: stream an event file through the worker pool and report latency the way
// trigger engineers read it. Parsing here, the run itself in pipeline/run.ts.

import { parseArgs, type CommandIo, type CommandMain, type CommandSpec, type OptionSpec, type ParsedArgs } from '../args.js';
import { UsageError } from '../../errors.js';
import { CLUSTER_OPTIONS, FORCE_OPTION, GRID_OPTIONS, INFLATE_OPTIONS, MAX_EVENT_GAP_OPTION, clusterSettingsFrom, gridFrom, inflateLimitsFrom, maxEventGapFrom } from '../common-options.js';
import { checkOutputAllowed } from '../../output/output-target.js';
import { DEFAULT_BATCH, DEFAULT_CHECK, type CheckOption, type RunOptions } from '../../pipeline/run-plan.js';
import { engineStoppedOf, inputErrorOf } from '../../pipeline/run-summary.js';
import { runEvents } from '../../pipeline/run.js';
import { shardReadingNote } from '../../pipeline/shard-input.js';
import { findRate, scanWorkers } from '../../pipeline/studies.js';
import { describeMachine, type RunSummary } from '../../measure/summary.js';
import { LISTED_MAX } from '../../measure/run-tally.js';
import { formatReport } from '../../measure/report.js';
import { formatProgramReport } from '../../measure/program-report.js';
import { runFailures } from '../../measure/run-verdict.js';
import { writeTextFile } from '../../output/output-file.js';
import { DISPLAY_OPTION, PER_EVENT_OPTION, REPORT_OPTION, RunReportOutputs } from '../report-outputs.js';
import type { ArrivalMode } from '../../pipeline/arrivals.js';
import type { EngineName } from '../../clustering/clusterers.js';
import { parseWindowEmulation, windowFinderName } from '../../clustering/window-finder.js';
import { PILEUP_OPTIONS, pileupSettingsFrom } from '../pileup-options.js';
import { GROOMING_OPTIONS, groomingSettingsFrom } from '../grooming-options.js';
import { RUN_PROGRAM_OPTIONS, runProgramFrom } from '../run-program-options.js';
import { ExecEngineError } from '../../pipeline/exec-engine.js';

/** problem lines (invalid events, failed batches, check differences) written to stderr */
const PROBLEM_LINES_MAX = 20;

/** run's own options; `demo` shares some of them (runOption) */
const RUN_OPTIONS: OptionSpec[] = [
  { name: 'workers', kind: 'integer', argument: '<n>', description: `worker threads, each with its own engine (default: cores in a closed loop, here ${describeMachine().cores}; cores − 1 in an open loop and --find-rate's trials, at least 1)` },
  { name: 'batch', kind: 'integer', argument: '<k>', description: `events per task sent to a worker (default: ${DEFAULT_BATCH})` },
  { name: 'rate', kind: 'number', argument: '<hz>', description: 'open loop: events due at fixed spacing 1/rate (default: closed loop, as fast as the pool takes them)' },
  { name: 'poisson', kind: 'number', argument: '<hz>', description: 'open loop: events due at Poisson arrivals of this mean rate, seeded by --seed' },
  { name: 'seed', kind: 'integer', argument: '<n>', description: 'seed of the Poisson arrivals and of the --check sample (default: 1)' },
  { name: 'budget-us', kind: 'number', argument: '<us>', description: 'latency budget per event; events over it are counted (default: none)' },
  { name: 'max-miss-fraction', kind: 'number', argument: '<F>', description: 'fail the run (exit code 1) when more than this fraction of the clustered events miss --budget-us, for CI (default: none)' },
  { name: 'find-rate', kind: 'flag', description: 'also search the highest open-loop rate whose end-to-end p99 stays within --budget-us (7 open-loop runs over the input; bound them with --events)' },
  { name: 'cpu-wait-per-event', kind: 'flag', description: 'open loop: also read, per event, how long its worker\'s thread and the main thread waited for a CPU (Linux run-queue time; a few µs of reads per event), and report the overhead of the events not delayed (default: the run\'s totals only)' },
  { name: 'scan-workers', kind: 'flag', description: 'also repeat the closed-loop run with 1 .. cores workers and report the scaling' },
  { name: 'check', kind: 'string', argument: '<all|fraction|none>', description: `compare the engine's jets with the reference bit for bit on all events, a seeded fraction, or none (default: ${DEFAULT_CHECK.fraction})` },
  { name: 'repro', kind: 'string', argument: '<file>', description: 'write each event on which the engine and the reference disagree, whole, to this event file (default: none)' },
  { name: 'json', kind: 'string', argument: '<file>', description: 'write the machine-readable summary here (default: none)' },
  { name: 'out', kind: 'string', argument: '<file>', description: 'write the jets of every event to a jets file (default: none)' },
  { name: 'shard', kind: 'string', argument: '<k/n>', description: 'process only every n-th batch of events starting with batch k, for job arrays (default: 0/1)' },
  { name: 'events', kind: 'integer', argument: '<n>', description: 'stop after the first n events of the file (default: all)' },
  { name: 'engine', kind: 'string', argument: '<wasm|reference|window[:W:SEEDET]|exec:CMD>', description: 'clusterer in the workers: the engine, the plain reference, the level-1 style window finder (W x W towers around maxima of et >= SEEDET GeV, default 9:5; no --check), or a program of your own, one per worker, fed the event stream on its stdin and answering with a jets stream (default: wasm)' },
  ...RUN_PROGRAM_OPTIONS,
  { name: 'quiet', kind: 'flag', short: 'q', description: 'no progress bar' },
];

export const spec: CommandSpec = {
  name: 'run',
  summary: 'Stream an event file through a pool of workers, cluster every event and report per-event latency.\nExit code 1 also when a batch of events failed in a worker, when no event was clustered, or when more than --max-miss-fraction of the events missed --budget-us; 2 when an engine program used up --engine-restarts and 130 when interrupted (the summary is then marked partial, what came before kept).',
  usage: 'jetlag run <events> [options]',
  positionals: { min: 1, max: 1 },
  options: [
    ...RUN_OPTIONS,
    REPORT_OPTION,
    PER_EVENT_OPTION,
    DISPLAY_OPTION,
    FORCE_OPTION,
    ...CLUSTER_OPTIONS,
    ...PILEUP_OPTIONS,
    ...GROOMING_OPTIONS,
    ...GRID_OPTIONS.map((o) => ({ ...o, description: `CSV input: ${o.description}` })),
    MAX_EVENT_GAP_OPTION,
    ...INFLATE_OPTIONS,
  ],
};

/** One of run's options for another command, with that command's own default where it has one. */
export function runOption(name: string, defaultText?: string): OptionSpec {
  const option = RUN_OPTIONS.find((o) => o.name === name);
  if (option === undefined) throw new Error(`run has no option --${name}`);
  if (defaultText === undefined) return option;
  return { ...option, description: option.description.replace(/\(default: .*\)$/, `(default: ${defaultText})`) };
}

export function positiveNumber(args: ParsedArgs, name: string, command = 'run'): number | undefined {
  const value = args.values[name] as number | undefined;
  if (value !== undefined && !(value > 0)) throw new UsageError(`${command}: --${name} must be a positive number, got ${value}`);
  return value;
}

export function positiveInteger(args: ParsedArgs, name: string, command = 'run'): number | undefined {
  const value = args.values[name] as number | undefined;
  if (value !== undefined && !(Number.isInteger(value) && value >= 1)) throw new UsageError(`${command}: --${name} must be a positive integer, got ${value}`);
  return value;
}

export function parseCheck(text: string | undefined, seed: number, command = 'run'): CheckOption {
  if (text === undefined) return { ...DEFAULT_CHECK, seed };
  if (text === 'all') return { mode: 'all', fraction: 1, seed };
  if (text === 'none') return { mode: 'none', fraction: 0, seed };
  const fraction = Number(text);
  if (text.trim() === '' || !(fraction >= 0 && fraction <= 1)) {
    throw new UsageError(`${command}: --check must be all, none or a fraction in [0, 1], got ${JSON.stringify(text)}`);
  }
  return { mode: fraction === 0 ? 'none' : fraction === 1 ? 'all' : 'fraction', fraction, seed };
}

export function parseShard(text: string | undefined): { index: number; count: number } {
  if (text === undefined) return { index: 0, count: 1 };
  const match = /^(\d+)\/(\d+)$/.exec(text);
  const index = match ? Number(match[1]) : NaN;
  const count = match ? Number(match[2]) : NaN;
  if (!match || !(count >= 1) || !(index < count)) {
    throw new UsageError(`run: --shard must be k/n with 0 <= k < n, got ${JSON.stringify(text)}`);
  }
  return { index, count };
}

/** The run's options from a command line (pure: no file is touched). */
export function runOptionsFrom(args: ParsedArgs): RunOptions & { maxMissFraction: number | null; findRate: boolean; scanWorkers: boolean; json: string | null; quiet: boolean; poisson: boolean } {
  const rate = positiveNumber(args, 'rate');
  const poissonRate = positiveNumber(args, 'poisson');
  if (rate !== undefined && poissonRate !== undefined) throw new UsageError('run: give --rate or --poisson, not both');
  const seed = (args.values.seed as number | undefined) ?? 1;
  const arrival: ArrivalMode = rate !== undefined ? { kind: 'fixed', rateHz: rate }
    : poissonRate !== undefined ? { kind: 'poisson', rateHz: poissonRate, seed } : { kind: 'closed' };
  const budgetUs = positiveNumber(args, 'budget-us') ?? null;
  const maxMissFraction = (args.values['max-miss-fraction'] as number | undefined) ?? null;
  if (maxMissFraction !== null && !(maxMissFraction >= 0 && maxMissFraction <= 1)) {
    throw new UsageError(`run: --max-miss-fraction must be a fraction in [0, 1], got ${maxMissFraction}`);
  }
  if (maxMissFraction !== null && budgetUs === null) throw new UsageError('run: --max-miss-fraction needs --budget-us');
  const wantFindRate = args.values['find-rate'] === true;
  if (wantFindRate && budgetUs === null) throw new UsageError('run: --find-rate needs --budget-us');
  const engineText = args.values.engine as string | undefined;
  const window = engineText === undefined ? null : parseWindowEmulation(engineText, 'run: --engine');
  const settings = clusterSettingsFrom(args, 'run');
  const program = runProgramFrom(args, engineText, budgetUs, settings.ptMin);
  if (engineText !== undefined && window === null && program === null && engineText !== 'wasm' && engineText !== 'reference') {
    throw new UsageError(`run: --engine must be wasm, reference, window[:W:SEEDET] or exec:'COMMAND ARGS…', got ${JSON.stringify(engineText)}`);
  }
  // the window finder is not generalised kt (spec section 11): there is nothing to hold its
  // jets to bit for bit, so the check is off; its accuracy is `jetlag compare`'s business
  const check = args.values.check as string | undefined;
  if (window !== null && check !== undefined && check !== 'none') {
    throw new UsageError(`run: --engine ${engineText} is not generalised kt and has no reference to be checked against bit for bit; leave out --check (use jetlag compare for its accuracy)`);
  }
  const engine: EngineName = window !== null ? windowFinderName(window) : engineText === 'reference' ? 'reference' : 'wasm';
  const cpuWaitPerEvent = args.values['cpu-wait-per-event'] === true;
  if (cpuWaitPerEvent && arrival.kind === 'closed') throw new UsageError('run: --cpu-wait-per-event needs an open loop (--rate or --poisson)');
  return {
    input: args.positionals[0],
    workers: positiveInteger(args, 'workers'),
    batch: positiveInteger(args, 'batch'),
    arrival,
    budgetUs,
    check: parseCheck(window !== null ? 'none' : check, seed),
    settings,
    program,
    pileup: pileupSettingsFrom(args, 'run'),
    grooming: groomingSettingsFrom(args, 'run'),
    grid: gridFrom(args, 'run'),
    maxEventGap: maxEventGapFrom(args, 'run'),
    inflate: inflateLimitsFrom(args, 'run'),
    force: args.values.force === true,
    engine,
    shard: parseShard(args.values.shard as string | undefined),
    out: (args.values.out as string | undefined) ?? null,
    repro: (args.values.repro as string | undefined) ?? null,
    maxEvents: positiveInteger(args, 'events') ?? null,
    maxMissFraction,
    findRate: wantFindRate,
    scanWorkers: args.values['scan-workers'] === true,
    cpuWaitPerEvent,
    json: (args.values.json as string | undefined) ?? null,
    quiet: args.values.quiet === true,
    poisson: poissonRate !== undefined,
  };
}

export const main: CommandMain = async (argv: string[], io: CommandIo) => {
  const args = parseArgs(spec, argv);
  const options = runOptionsFrom(args);
  // the summary is written at the end: an output that would be refused must not cost the run
  if (options.json) await checkOutputAllowed(options.json, { force: options.force });
  const controller = new AbortController();
  const onSigint = () => {
    if (controller.signal.aborted) process.exit(130); // a second Ctrl-C does not wait
    controller.abort();
    io.stderr.write('jetlag run: interrupted, finishing the batches in flight (Ctrl-C again to quit now)\n');
  };
  const reportOutputs = await RunReportOutputs.open(args, options.arrival?.kind !== undefined && options.arrival.kind !== 'closed', options.force === true);
  process.on('SIGINT', onSigint);
  let problems = 0;
  const onProblem = (line: string) => {
    if (problems++ < PROBLEM_LINES_MAX) io.stderr.write(`jetlag run: ${line}\n`);
  };
  const shardNote = shardReadingNote(options.input, options.shard);
  if (shardNote !== null) io.stderr.write(`jetlag run: ${shardNote}\n`);
  let summary: RunSummary;
  try {
    summary = await runEvents({
      ...options,
      signal: controller.signal,
      progress: io.isTty && !options.quiet ? io.stderr : null,
      onProblem,
      onEvent: reportOutputs.onEvent,
    });
    if (!summary.partial && options.scanWorkers) {
      summary.scanWorkers = await scanWorkers({ ...options, signal: controller.signal }, describeMachine().cores);
    }
    if (!summary.partial && options.findRate) {
      summary.findRate = await findRate({ ...options, signal: controller.signal }, summary, options.budgetUs!, options.poisson);
    }
  } catch (error) {
    await reportOutputs.abort();
    if (error instanceof ExecEngineError) {
      // a program that cannot be started: one line, exit 2
      io.stderr.write(`jetlag run: ${error.message}; the run stopped there\n`);
      return 2;
    }
    throw error;
  } finally {
    process.off('SIGINT', onSigint);
  }
  if (options.json) await writeTextFile(options.json, JSON.stringify(summary, null, 2) + '\n', { stdout: io.stdout, force: options.force });
  await reportOutputs.finish(summary, io);
  // with the jets or the summary on stdout, the text report goes to stderr
  (options.out === '-' || options.json === '-' ? io.stderr : io.stdout).write(formatReport(summary) + formatProgramReport(summary));
  if (problems > PROBLEM_LINES_MAX) {
    io.stderr.write(`jetlag run: ${problems - PROBLEM_LINES_MAX} more problems not shown (invalid events ${summary.events.invalid}, failed ${summary.events.failed}, disagreeing ${summary.check.disagreeing}); the --json summary lists up to ${LISTED_MAX} invalid events and failed batches\n`);
  }
  const inputError = inputErrorOf(summary);
  if (inputError) {
    io.stderr.write(`jetlag run: ${inputError.message}\n`);
    return 2;
  }
  const engineStopped = engineStoppedOf(summary);
  if (engineStopped !== null) {
    // the program's fault, not jetlag's: one line, exit 2; what it answered before is kept above
    io.stderr.write(`jetlag run: ${engineStopped}; the run stopped there\n`);
    return 2;
  }
  if (controller.signal.aborted) return 130;
  const failures = runFailures(summary, { maxMissFraction: options.maxMissFraction });
  for (const failure of failures) io.stderr.write(`jetlag run: ${failure}\n`);
  return failures.length > 0 || summary.check.disagreeing > 0 || summary.events.failed > 0 ? 1 : 0;
};
