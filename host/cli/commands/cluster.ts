// jetlag cluster: every event of a file through one clusterer, in this thread, jets out as a
// jets file (default) or JSON lines. The streamed, timed run over a worker pool is `jetlag run`;
// this command is the plain way to get jets, to reproduce one event, or to make a candidate
// file with a precision emulation for `jetlag compare`.
//
// Invalid events are reported on stderr (file, event, byte offset), written to the output as
// error records so no event number is lost, and counted; the command goes on. Exit 2 when the
// input becomes unreadable (everything before the problem is written and kept). How:
// pipeline/cluster-file.ts.

import { parseArgs, type CommandIo, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import { parseEngineName } from '../../clustering/clusterers.js';
import { CLUSTER_OPTIONS, FORCE_OPTION, GRID_OPTIONS, INFLATE_OPTIONS, MAX_EVENT_GAP_OPTION, clusterSettingsFrom, gridFrom, hasGridOptions, inflateLimitsFrom, maxEventGapFrom } from '../common-options.js';
import { describeSettings } from '../../clustering/describe-settings.js';
import { parseEmulation } from '../../clustering/emulation-mode.js';
import { DEFAULT_MAX_RECORD_BYTES } from '../../input/record-framer.js';
import { clusterFile } from '../../pipeline/cluster-file.js';
import { PILEUP_OPTIONS, pileupSettingsFrom } from '../pileup-options.js';
import { GROOMING_OPTIONS, groomingSettingsFrom } from '../grooming-options.js';
import { describeGrooming } from '../../clustering/grooming/settings.js';
import { describePileup } from '../../clustering/pileup/settings.js';
import { execCommandOf, splitCommand } from '../../pipeline/exec-command.js';
import { DEFAULT_ENGINE_RESTARTS, DEFAULT_ENGINE_TIMEOUT_MS } from '../../pipeline/exec-engine.js';
import { describeProgramRun, type ProgramEngineChoice } from '../../pipeline/exec-cluster.js';
import { RecordProgress } from '../../measure/input-progress.js';
import { parseProgramCpu } from '../../pipeline/exec-cpu.js';
import { PROGRAM_CPU_OPTION } from '../program-cpu-options.js';
import { RUN_PROGRAM_OPTIONS, parseEngineInFlight } from '../run-program-options.js';

export const spec: CommandSpec = {
  name: 'cluster',
  summary: 'Cluster every event of an event file (or CSV tower file) and write the jets.\nExit code 0 when every event was written, invalid ones and those an engine program failed on as error records (counted on stderr), as with any engine; 2 when the input becomes unreadable or the program used up --engine-restarts.',
  usage: "jetlag cluster <events> [--engine wasm|reference|exec:'COMMAND ARGS…'] [--format jets|jsonl] [--out FILE] [options]",
  positionals: { min: 1, max: 1 },
  options: [
    { name: 'engine', kind: 'string', argument: '<name>', description: "wasm (the engine), reference (the plain TypeScript reference), or exec:'COMMAND ARGS…', an outside program that turns an event stream into a jets stream (proto/README.md) (default: wasm)" },
    { name: 'engine-timeout-ms', kind: 'integer', argument: '<ms>', description: `exec: engines: how long the program may take for one event before it is killed and restarted (default: ${DEFAULT_ENGINE_TIMEOUT_MS})` },
    { name: 'engine-restarts', kind: 'integer', argument: '<n>', description: `exec: engines: how often a failing program is restarted before the command stops (default: ${DEFAULT_ENGINE_RESTARTS})` },
    RUN_PROGRAM_OPTIONS.find((option) => option.name === 'engine-in-flight')!,
    PROGRAM_CPU_OPTION,
    { name: 'emulate', kind: 'string', argument: '<f32|fixed:LSB|window:W:SEEDET>', description: 'cluster with single precision (f32) or tower energies quantised to LSB GeV (fixed:0.25) instead, or run the level-1 style window finder: W x W towers around local maxima of et >= SEEDET GeV (window = window:9:5)' },
    { name: 'format', kind: 'string', argument: '<jets|jsonl>', description: 'a jets file, or one JSON line per event (default: jets)' },
    { name: 'out', kind: 'string', argument: '<file>', description: 'output file, - for stdout (default: -)' },
    { name: 'no-towers', kind: 'flag', description: 'leave out the constituent tower indices' },
    { name: 'gzip', kind: 'flag', description: 'gzip-compress a jets file' },
    { name: 'label', kind: 'string', argument: '<text>', description: 'free-text label in the jets file header' },
    { name: 'max-record-bytes', kind: 'integer', argument: '<n>', description: `largest record accepted (default: ${DEFAULT_MAX_RECORD_BYTES})` },
    { name: 'quiet', kind: 'flag', short: 'q', description: 'no progress bar and no summary line on stderr' },
    FORCE_OPTION,
    ...CLUSTER_OPTIONS,
    ...PILEUP_OPTIONS,
    ...GROOMING_OPTIONS,
    ...GRID_OPTIONS,
    MAX_EVENT_GAP_OPTION,
    ...INFLATE_OPTIONS,
  ],
};

/** problem lines shown on stderr before the rest are only counted */
const PROBLEM_LINES_MAX = 20;

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const args = parseArgs(spec, argv);
  const input = args.positionals[0];
  const format = (args.values.format as string | undefined) ?? 'jets';
  if (format !== 'jets' && format !== 'jsonl') throw new UsageError(`cluster: --format must be jets or jsonl, got ${JSON.stringify(format)}`);
  const engineText = (args.values.engine as string | undefined) ?? 'wasm';
  const execCommand = execCommandOf(engineText);
  const engine = execCommand === null ? parseEngineName(engineText, 'cluster') : 'wasm';
  const emulation = args.values.emulate !== undefined ? parseEmulation(args.values.emulate as string) : null;
  if (execCommand !== null && emulation !== null) throw new UsageError('cluster: --emulate and --engine exec: exclude each other');
  if (execCommand === null && (args.values['engine-timeout-ms'] !== undefined || args.values['engine-restarts'] !== undefined)) {
    throw new UsageError('cluster: --engine-timeout-ms and --engine-restarts apply to --engine exec: only');
  }
  if (execCommand === null && args.values['program-cpu'] !== undefined) throw new UsageError('cluster: --program-cpu applies to --engine exec: only');
  if (execCommand === null && args.values['engine-in-flight'] !== undefined) throw new UsageError('cluster: --engine-in-flight applies to --engine exec: only');
  const maxInFlight = parseEngineInFlight(args.values['engine-in-flight'] as number | undefined, 'cluster');
  const programCpu = parseProgramCpu(args.values['program-cpu'] as string | undefined, 'cluster');
  const timeoutMs = (args.values['engine-timeout-ms'] as number | undefined) ?? DEFAULT_ENGINE_TIMEOUT_MS;
  const maxRestarts = (args.values['engine-restarts'] as number | undefined) ?? DEFAULT_ENGINE_RESTARTS;
  if (!(timeoutMs >= 1)) throw new UsageError(`cluster: --engine-timeout-ms must be at least 1, got ${timeoutMs}`);
  if (!(maxRestarts >= 0)) throw new UsageError(`cluster: --engine-restarts must be 0 or more, got ${maxRestarts}`);
  const program: ProgramEngineChoice | undefined = execCommand === null ? undefined : {
    argv: splitCommand(execCommand, 'cluster'),
    label: engineText,
    timeoutMs,
    maxRestarts,
    maxInFlight,
    onFault: (line) => io.stderr.write(`jetlag cluster: ${line}\n`),
    programCpu,
  };
  const settings = clusterSettingsFrom(args, 'cluster');
  const pileup = pileupSettingsFrom(args, 'cluster');
  const grooming = groomingSettingsFrom(args, 'cluster');
  const quiet = Boolean(args.values.quiet);

  let shownProblems = 0;
  const progress = new RecordProgress(io.stderr, input, io.isTty && !quiet);
  progress.start();
  const result = await clusterFile({
    input,
    grid: hasGridOptions(args) ? gridFrom(args, 'cluster') : undefined,
    maxRecordBytes: args.values['max-record-bytes'] as number | undefined,
    maxEventGap: maxEventGapFrom(args, 'cluster'),
    inflate: inflateLimitsFrom(args, 'cluster'),
    force: args.values.force === true,
    engine,
    emulation,
    program,
    settings,
    pileup,
    grooming,
    withTowers: !args.values['no-towers'],
    format,
    out: (args.values.out as string | undefined) ?? '-',
    gzip: Boolean(args.values.gzip),
    label: args.values.label as string | undefined,
    stdout: io.stdout,
    onInvalid: (line) => {
      if (shownProblems++ < PROBLEM_LINES_MAX) io.stderr.write(`jetlag cluster: ${line}\n`);
    },
    onRecord: progress.onRecord,
  }).finally(() => progress.stop());
  const { events, invalid, outsideAcceptance, unreadable } = result;
  if (shownProblems > PROBLEM_LINES_MAX) io.stderr.write(`jetlag cluster: ... and ${shownProblems - PROBLEM_LINES_MAX} more invalid events\n`);
  if (unreadable) {
    io.stderr.write(`jetlag cluster: ${unreadable.message}; the ${events} events before it were clustered and written\n`);
    return 2;
  }
  if (result.program && (!quiet || result.stopped)) {
    io.stderr.write(`jetlag cluster: ${describeProgramRun(engineText, result.engineName, result.program.counts, result.program.figures)}\n`);
  }
  if (result.stopped) {
    io.stderr.write(`jetlag cluster: ${result.stopped.message}; stopped there, the ${result.written} events before it were written\n`);
    return 2;
  }
  if (!quiet) {
    const outside = outsideAcceptance > 0 ? `; ${outsideAcceptance} raw deposit${outsideAcceptance === 1 ? '' : 's'} outside the eta acceptance` : '';
    const failed = result.program ? `, ${result.failed} failed by the program` : '';
    io.stderr.write(`jetlag cluster: ${events} events (${events - invalid - result.failed} clustered, ${invalid} invalid${failed}) with ${result.engineName}, ${describeSettings(settings)}${describePileup(pileup) ? `, ${describePileup(pileup)}` : ''}${describeGrooming(grooming) ? `, ${describeGrooming(grooming)}` : ''}${outside}\n`);
  }
  return 0;
}
