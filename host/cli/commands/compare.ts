// jetlag compare EVENTS CANDIDATE: an outside implementation's jets against the reference,
// in the tolerance mode of clustering-spec.md section 7.
//
//   EVENTS ──reader──> towers ──ReferenceClusterer──> reference jets ─┐
//                                                                      ├─ ToleranceMatcher ─> ValidationAccumulator
//   CANDIDATE ──candidate-reader──> candidate jets (by event number) ─┘
//
// Both files are read as streams, side by side by event number (each must be in increasing
// event order; a candidate event out of order or repeated is named and left out). The
// reference is computed with ptMin 0 so that a candidate jet just above ptMin whose reference
// jet lies just below still finds its match; ptMin then decides which jets must agree.
// `--engine wasm` computes the reference jets with the engine instead, which the project
// holds to the reference's bits (bit-exact mode, `jetlag run --check all`), for speed; the
// report is the same.

import { parseArgs, type CommandIo, type CommandSpec, type ParsedArgs } from '../args.js';
import { InputError, UsageError } from '../../errors.js';
import { openCandidate, type CandidateEvent, type CandidateSource } from '../../input/candidate-reader.js';
import { CLUSTER_OPTIONS, GRID_OPTIONS, clusterSettingsFrom, describeSettings, gridFrom, hasGridOptions } from '../common-options.js';
import { openEventSource } from '../../input/event-source.js';
import { EventTowerReader } from '../../input/event-towers.js';
import { describeGrid, sameGrid } from '../../clustering/grid.js';
import { makeClusterer, parseEngineName, type EngineName } from '../../clustering/clusterers.js';
import { writeTextFile } from '../../output/record-writer.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher, checkToleranceSettings, type ToleranceSettings } from '../../validate/tolerance-compare.js';
import { DEFAULT_SETTINGS, type ClusterSettings, type Grid } from '../../types.js';
import { ValidationAccumulator, formatValidationReport, type ValidationReport } from '../../validate/validation-report.js';

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
    ...CLUSTER_OPTIONS.map((o) => (o.name === 'ptmin'
      ? { ...o, description: 'jets with pt >= this must agree; softer ones take part in matching only (default: the candidate header\'s, else 0)' }
      : { ...o, description: `${o.description.replace(/ \(default: .*\)$/, '')} (default: the candidate header's, else ${o.description.match(/\(default: (.*)\)$/)?.[1] ?? 'none'})` })),
    ...GRID_OPTIONS.map((o) => ({ ...o, description: `CSV events: ${o.description}` })),
  ],
};

export interface CompareOptions {
  /** algorithm options as given on the command line (parsed), applied over the candidate header */
  args: ParsedArgs;
  tolerance: Omit<ToleranceSettings, 'ptMin'>;
  worst: number;
  /** what computes the reference jets (default: the reference) */
  engine?: EngineName;
  /** notes for stderr (setting overrides, candidate without settings) */
  note: (line: string) => void;
}

export interface CompareResult {
  report: ValidationReport;
  settings: ClusterSettings;
  grid: Grid;
  candidate: { format: CandidateSource['format']; engine: string | null; producer: string | null };
  /** an input that became unreadable part way (the report covers what came before) */
  inputError: InputError | null;
}

const SETTING_NAMES: [keyof ClusterSettings, string][] = [
  ['p', '--p / --algorithm'],
  ['radius', '--radius'],
  ['ptMin', '--ptmin'],
  ['threshold', '--threshold'],
  ['recombination', '--recombination'],
];

/** Reads both files side by side and gathers the report. */
export async function compareFiles(eventsPath: string, candidatePath: string, options: CompareOptions): Promise<CompareResult> {
  const candidate = await openCandidate(candidatePath);
  let events: Awaited<ReturnType<typeof openEventSource>>;
  try {
    events = await openEventSource(eventsPath, { grid: gridFrom(options.args, 'compare') });
  } catch (error) {
    await candidate.events.return(undefined as never);
    throw error;
  }
  const grid = events.header.grid;
  if (events.format === 'events-file' && hasGridOptions(options.args) && !sameGrid(gridFrom(options.args, 'compare'), grid)) {
    await candidate.events.return(undefined as never);
    await events.records.return(undefined as never);
    throw new UsageError(`compare: ${events.label} carries its own grid; the grid options apply to CSV tower files only`);
  }
  const header = candidate.header;
  if (header !== null && !sameGrid(header.grid, grid)) {
    await candidate.events.return(undefined as never);
    await events.records.return(undefined as never);
    throw new InputError(candidate.label, `the candidate's grid (${describeGrid(header.grid)}) differs from the events' grid (${describeGrid(grid)}): it was not made from these events`);
  }

  // the candidate header's settings unless options say otherwise; each override is named
  const base: ClusterSettings = header?.settings ? { ...header.settings } : { ...DEFAULT_SETTINGS };
  const settings = clusterSettingsFrom(options.args, 'compare', base);
  if (header?.settings) {
    for (const [key, name] of SETTING_NAMES) {
      if (key === 'ptMin' && settings.ptMin > header.settings.ptMin) {
        options.note(`compare: jets must agree above --ptmin ${settings.ptMin} GeV (the candidate was made with ptmin ${header.settings.ptMin})`);
        continue;
      }
      if (settings[key] !== header.settings[key]) {
        options.note(`compare: ${name} ${settings[key]} differs from the candidate header's ${key} ${header.settings[key]} (engine ${header.settings.engine}); using ${settings[key]}`);
      }
    }
    if (settings.ptMin < header.settings.ptMin) {
      options.note(`compare: the candidate kept only jets with pt >= ${header.settings.ptMin} GeV, so reference jets in [${settings.ptMin}, ${header.settings.ptMin}) GeV will be unmatched`);
    }
  } else {
    // a wrong setting here fails every event, so say which ones were used
    options.note(`compare: the candidate (${candidate.format}) names no algorithm settings; the reference uses ${describeSettings(settings)}` +
      ` from the options and defaults (threshold ${settings.threshold} GeV; give --algorithm, --radius, --threshold ... as the candidate was made)`);
  }

  const tolerance: ToleranceSettings = { ...options.tolerance, ptMin: settings.ptMin };
  const matcher = new ToleranceMatcher(tolerance);
  const accumulator = new ValidationAccumulator(tolerance, options.worst);
  const reference = makeClusterer(options.engine ?? 'reference', grid, { ...settings, ptMin: 0 });
  if ('withTowers' in reference) (reference as { withTowers: boolean }).withTowers = false;
  const towerReader = new EventTowerReader(grid);
  const empty: CandidateEvent = {
    event: null, offset: 0, count: 0, pt: new Float64Array(0), rapidity: new Float64Array(0), phi: new Float64Array(0),
    mass: new Float64Array(0), hasMass: false, error: '',
  };

  let inputError: InputError | null = null;
  let candidateEnded = false;
  // written inside nextCandidate, so kept in an object (TypeScript does not track closures)
  const candidateState: { error: InputError | null } = { error: null };
  let lastCandidate = -1;
  const candidateIterator = candidate.events;

  /** the next candidate event in increasing order; out-of-order and repeated ones are named */
  const nextCandidate = async (): Promise<CandidateEvent | null> => {
    while (!candidateEnded) {
      let step: IteratorResult<CandidateEvent>;
      try {
        step = await candidateIterator.next();
      } catch (error) {
        if (!(error instanceof InputError)) throw error;
        candidateState.error = error;
        candidateEnded = true;
        return null;
      }
      if (step.done) { candidateEnded = true; return null; }
      const item = step.value;
      if (item.event === null) {
        accumulator.problem('unreadable candidate records', `byte ${item.offset}: ${item.error}`);
        continue;
      }
      if (item.event === lastCandidate) {
        accumulator.problem('duplicated candidate events', `event ${item.event} again at byte ${item.offset}; the first is used`);
        continue;
      }
      if (item.event < lastCandidate) {
        accumulator.problem('candidate events out of order', `event ${item.event} at byte ${item.offset} comes after event ${lastCandidate}; left out`);
        continue;
      }
      lastCandidate = item.event;
      return item;
    }
    return null;
  };

  let pending = await nextCandidate();
  let lastEvent = -1;
  try {
    for await (const record of events.records) {
      const towers = towerReader.read(record.bytes);
      if (towers.event === undefined) {
        accumulator.addInvalidInEvents();
        accumulator.problem('invalid events in EVENTS', `record at byte ${record.offset}: ${towers.ok ? '' : towers.problem}`);
        continue;
      }
      const event = towers.event;
      if (event <= lastEvent) {
        accumulator.addInvalidInEvents();
        accumulator.problem('EVENTS out of order', `event ${event} at byte ${record.offset} comes after event ${lastEvent}; not compared`);
        continue;
      }
      lastEvent = event;
      while (pending !== null && pending.event! < event) {
        accumulator.problem('candidate events not in EVENTS', `event ${pending.event} at byte ${pending.offset}`);
        pending = await nextCandidate();
      }
      let mine: CandidateEvent | null = null;
      if (pending !== null && pending.event === event) {
        mine = pending;
        pending = await nextCandidate();
      }
      if (!towers.ok) {
        accumulator.addInvalidInEvents();
        accumulator.problem('invalid events in EVENTS', `event ${event} at byte ${record.offset}: ${towers.problem}`);
        if (mine !== null && mine.error === '' && mine.count > 0) {
          accumulator.problem('candidate jets for events invalid in EVENTS', `event ${event}: ${mine.count} jets at byte ${mine.offset}`);
        }
        continue;
      }
      if (mine === null) {
        if (candidateState.error !== null) {
          accumulator.addMissing(event, `the candidate is unreadable from byte ${candidateState.error.offset ?? '?'} on`);
          continue;
        }
        if (!candidate.absentMeansEmpty) {
          accumulator.addMissing(event, `no ${candidate.format === 'jsonl' ? 'line' : 'record'} in ${candidate.label}`);
          continue;
        }
        mine = empty;
      }
      if (mine.error !== '') {
        accumulator.addInvalidInCandidate(event, `${mine.error} (byte ${mine.offset})`);
        continue;
      }
      const jets = reference.cluster(towers.towerIndex, towers.towerEt);
      matcher.match(jets, mine);
      accumulator.addCompared(event, matcher, jets, mine, mine.hasMass ? mine.mass : null);
    }
  } catch (error) {
    if (!(error instanceof InputError)) throw error;
    inputError = error;
  }
  if (inputError === null) {
    while (pending !== null) {
      accumulator.problem('candidate events not in EVENTS', `event ${pending.event} at byte ${pending.offset}`);
      pending = await nextCandidate();
    }
  } else {
    await candidateIterator.return(undefined as never);
  }
  return {
    report: accumulator.report(),
    settings,
    grid,
    candidate: { format: candidate.format, engine: header?.settings?.engine ?? null, producer: header?.producer ?? null },
    inputError: inputError ?? candidateState.error,
  };
}

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

  const engine = parseEngineName((args.values.engine as string | undefined) ?? 'reference', 'compare');
  const result = await compareFiles(eventsPath, candidatePath, { args, tolerance, worst, engine, note: (line) => io.stderr.write(line + '\n') });
  const { report } = result;
  const fraction = report.events.agreeingFraction;
  const passed = fraction !== null && fraction >= require && result.inputError === null;

  const candidateEngine = result.candidate.engine !== null ? `, engine ${result.candidate.engine}` : '';
  text.write(`compare: ${candidatePath} (${result.candidate.format}${candidateEngine}) against the reference on ${eventsPath}\n`);
  text.write(`settings: ${describeSettings(result.settings)}; grid ${describeGrid(result.grid)}${engine === 'reference' ? '' : `; reference jets by ${engine}`}\n`);
  text.write(formatValidationReport(report));
  const verdict = fraction === null
    ? 'no valid events to compare'
    : `agreeing fraction ${fraction} ${fraction >= require ? '>=' : '<'} --require ${require}`;
  text.write(`${passed ? 'PASS' : 'FAIL'}: ${verdict}\n`);

  if (json !== undefined) {
    const document = {
      command: 'compare',
      files: { events: eventsPath, candidate: candidatePath },
      candidate: result.candidate,
      settings: result.settings,
      referenceJetsBy: engine,
      grid: result.grid,
      require,
      passed,
      inputError: result.inputError?.message ?? null,
      ...report,
    };
    const body = JSON.stringify(document, null, 2) + '\n';
    if (json === '-') io.stdout.write(body);
    else await writeTextFile(json, body);
  }
  if (result.inputError !== null) {
    io.stderr.write(`jetlag: ${result.inputError.message}\n`);
    return 2;
  }
  return passed ? 0 : 1;
}
