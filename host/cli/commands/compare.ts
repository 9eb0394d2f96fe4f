// jetlag compare EVENTS CANDIDATE: an outside implementation's jets against the reference,
// in the tolerance mode of clustering-spec.md section 7 (how: validate/compare-files.ts).
// `--engine wasm` computes the reference jets with the engine instead, for speed; the report
// is the same.

import { parseArgs, type CommandIo, type CommandSpec, type ParsedArgs } from '../args.js';
import { UsageError } from '../../errors.js';
import { CLUSTER_OPTIONS, FORCE_OPTION, GRID_OPTIONS, INFLATE_OPTIONS, MAX_EVENT_GAP_OPTION, clusterSettingsFrom, gridFrom, hasGridOptions, inflateLimitsFrom, maxEventGapFrom } from '../common-options.js';
import { describeGrid } from '../../clustering/grid.js';
import { parseEngineName } from '../../clustering/clusterers.js';
import { describeSettings } from '../../clustering/describe-settings.js';
import { writeTextFile } from '../../output/output-file.js';
import { DISPLAY_OPTION, REPORT_OPTION, writeCompareReport } from '../report-outputs.js';
import { DEFAULT_TOLERANCE, checkToleranceSettings, type ToleranceSettings } from '../../validate/tolerance-compare.js';
import { compareFiles } from '../../validate/compare-files.js';
import { formatValidationReport } from '../../validate/validation-text.js';
import { formatTurnOnCurves } from '../../validate/turn-on.js';
import { TURN_ON_OPTIONS, turnOnRequestsFrom } from '../turn-on-options.js';
import { PILEUP_OPTIONS, pileupSettingsFrom } from '../pileup-options.js';
import { GROOMING_OPTIONS, groomingSettingsFrom } from '../grooming-options.js';
import { formatGroomedAgreement } from '../../validate/groomed-agreement.js';
import { describeGrooming } from '../../clustering/grooming/settings.js';
import { describePileup } from '../../clustering/pileup/settings.js';
import { RecordProgress } from '../../measure/input-progress.js';

export const DEFAULT_REQUIRE = 0.999;

export const spec: CommandSpec = {
  name: 'compare',
  summary: 'Check an outside implementation\'s jets (a jets file, JSON lines or CSV event,pt,y,phi[,m]) against the reference on the same events, within tolerances.',
  usage: 'jetlag compare <events> <candidate> [options]',
  positionals: { min: 2, max: 2 },
  options: [
    { name: 'match-r', kind: 'number', argument: '<dR>', description: `a candidate jet matches a reference jet when closer than this in (y, phi) (default: ${DEFAULT_TOLERANCE.matchR})` },
    { name: 'pt-tol', kind: 'number', argument: '<x>', description: `a matched pair agrees when |pt_candidate / pt_reference - 1| <= this (default: ${DEFAULT_TOLERANCE.ptTol})` },
    { name: 'angle-tol', kind: 'number', argument: '<dR>', description: `... and when its distance in (y, phi) <= this (default: ${DEFAULT_TOLERANCE.angleTol})` },
    { name: 'require', kind: 'number', argument: '<fraction>', description: `exit 1 when the fraction of agreeing events is below this (default: ${DEFAULT_REQUIRE})` },
    { name: 'json', kind: 'string', argument: '<file>', description: 'write the report as JSON here; - for stdout, which moves the text report to stderr (default: none)' },
    { name: 'engine', kind: 'string', argument: '<reference|wasm>', description: 'what computes the reference jets: the reference itself, or the engine, which the project holds to the very same bits (jetlag run --check all shows it) and is several times faster (default: reference)' },
    { name: 'worst', kind: 'integer', argument: '<n>', description: 'list this many of the events furthest from agreeing (default: 10)' },
    FORCE_OPTION,
    { name: 'quiet', kind: 'flag', short: 'q', description: 'print only the PASS or FAIL line, not the report or a progress bar' },
    REPORT_OPTION,
    DISPLAY_OPTION,
    ...CLUSTER_OPTIONS.map((o) => (o.name === 'ptmin'
      ? { ...o, description: 'jets with pt >= this must agree; softer ones take part in matching only (default: the candidate header\'s, else 0)' }
      : { ...o, description: `${o.description.replace(/ \(default: .*\)$/, '')} (default: the candidate header's, else ${o.description.match(/\(default: (.*)\)$/)?.[1] ?? 'none'})` })),
    ...PILEUP_OPTIONS.map((o) => ({ ...o, description: `reference side: ${o.description.replace(/ \(default: .*\)$/, '')} (default: the candidate header's, else ${o.description.match(/\(default: (.*)\)$/)?.[1] ?? 'off'})` })),
    ...GROOMING_OPTIONS.map((o) => ({ ...o, description: `reference side: ${o.description.replace(/ \(default: .*\)$/, '')}; groomed pt and mass are compared for candidates that carry them (default: the candidate header's, else off)` })),
    ...GRID_OPTIONS.map((o) => ({ ...o, description: `CSV events: ${o.description}` })),
    MAX_EVENT_GAP_OPTION,
    ...INFLATE_OPTIONS,
    ...TURN_ON_OPTIONS,
  ],
};

function toleranceFrom(args: ParsedArgs): Omit<ToleranceSettings, 'ptMin'> {
  const tolerance = {
    matchR: (args.values['match-r'] as number | undefined) ?? DEFAULT_TOLERANCE.matchR,
    ptTol: (args.values['pt-tol'] as number | undefined) ?? DEFAULT_TOLERANCE.ptTol,
    angleTol: (args.values['angle-tol'] as number | undefined) ?? DEFAULT_TOLERANCE.angleTol,
  };
  try {
    checkToleranceSettings({ ...tolerance, ptMin: 0 });
  } catch (error) {
    throw new UsageError(`compare: ${(error as Error).message}`);
  }
  return tolerance;
}

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const args = parseArgs(spec, argv);
  const [eventsPath, candidatePath] = args.positionals;
  if (eventsPath === '-' && candidatePath === '-') throw new UsageError('compare: EVENTS and CANDIDATE cannot both be - (stdin); give at least one as a file');
  const tolerance = toleranceFrom(args);
  const require = (args.values.require as number | undefined) ?? DEFAULT_REQUIRE;
  if (!(require >= 0 && require <= 1)) throw new UsageError(`compare: --require must be a fraction in [0, 1], got ${require}`);
  const worst = (args.values.worst as number | undefined) ?? 10;
  if (worst < 0) throw new UsageError(`compare: --worst must be >= 0, got ${worst}`);
  const json = args.values.json as string | undefined;
  const text = json === '-' ? io.stderr : io.stdout;
  const quiet = args.values.quiet === true;
  const turnOn = turnOnRequestsFrom(args, 'compare');

  const engine = parseEngineName((args.values.engine as string | undefined) ?? 'reference', 'compare');
  const progress = new RecordProgress(io.stderr, eventsPath, io.isTty && !quiet);
  progress.start();
  const result = await compareFiles(eventsPath, candidatePath, {
    csvGrid: () => gridFrom(args, 'compare'),
    gridGiven: hasGridOptions(args),
    maxEventGap: maxEventGapFrom(args, 'compare'),
    inflate: inflateLimitsFrom(args, 'compare'),
    settingsOver: (base) => clusterSettingsFrom(args, 'compare', base),
    pileupOver: (base) => pileupSettingsFrom(args, 'compare', base),
    groomingOver: (base) => groomingSettingsFrom(args, 'compare', base),
    tolerance,
    worst,
    engine,
    turnOn,
    note: (line) => io.stderr.write(line + '\n'),
    onRecord: progress.onRecord,
  }).finally(() => progress.stop());
  const { report } = result;
  const fraction = report.events.agreeingFraction;
  const passed = fraction !== null && fraction >= require && result.inputError === null;

  const candidateEngine = result.candidate.engine !== null ? `, engine ${result.candidate.engine}` : '';
  if (!quiet) {
    text.write(`compare: ${candidatePath} (${result.candidate.format}${candidateEngine}) against the reference on ${eventsPath}\n`);
    const pileupText = `${result.pileup ? `, ${describePileup(result.pileup)}` : ''}${result.grooming ? `, ${describeGrooming(result.grooming)}` : ''}`;
    text.write(`settings: ${describeSettings(result.settings)}${pileupText}; grid ${describeGrid(result.grid)}${engine === 'reference' ? '' : `; reference jets by ${engine}`}\n`);
    text.write(formatValidationReport(report));
    text.write(formatGroomedAgreement(result.groomed, report.tolerance.ptTol));
    if (result.turnOn.length > 0) text.write(formatTurnOnCurves(result.turnOn));
  }
  const verdict = fraction === null
    ? 'no valid events to compare'
    : `agreeing fraction ${fraction} ${fraction >= require ? '>=' : '<'} --require ${require}`;
  text.write(`${passed ? 'PASS' : 'FAIL'}: ${verdict}\n`);

  if (json !== undefined || args.values.report !== undefined) {
    const document = {
      command: 'compare',
      files: { events: eventsPath, candidate: candidatePath },
      candidate: result.candidate,
      settings: result.settings,
      pileup: result.pileup,
      grooming: result.grooming,
      referenceJetsBy: engine,
      grid: result.grid,
      require,
      passed,
      inputError: result.inputError?.message ?? null,
      ...report,
      groomed: result.groomed,
      turnOn: result.turnOn,
    };
    const body = JSON.stringify(document, null, 2) + '\n';
    if (json === '-') io.stdout.write(body);
    else if (json !== undefined) await writeTextFile(json, body, { force: args.values.force === true });
    await writeCompareReport(args, document, io);
  }
  if (result.inputError !== null) {
    io.stderr.write(`jetlag compare: ${result.inputError.message}\n`);
    return 2;
  }
  return passed ? 0 : 1;
}
