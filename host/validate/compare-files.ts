// Compare an outside implementation's jets with the reference on the same events, in the
// tolerance mode of clustering-spec.md section 7 (the command is cli/commands/compare.ts).
//
//   EVENTS ──reader──> towers ──ReferenceClusterer──> reference jets ─┐
//                                                                      ├─ ToleranceMatcher ─> ValidationAccumulator
//   CANDIDATE ──candidate-reader──> candidate jets (by event number) ─┘
//
// Both files are read as streams, side by side by event number (each must be in increasing
// event order; a candidate event out of order or repeated is named and left out). The
// reference is computed with ptMin 0 so that a candidate jet just above ptMin whose reference
// jet lies just below still finds its match; ptMin then decides which jets must agree.
// The reference jets may come from the engine instead, which the project holds to the
// reference's bits (bit-exact mode, `jetlag run --check all`), for speed; the report is the same.

import { InputError, UsageError } from '../errors.js';
import { openCandidate, type CandidateEvent, type CandidateSource } from '../input/candidate-reader.js';
import { openEventSource } from '../input/event-source.js';
import type { InflateLimits } from '../input/input-chunks.js';
import { EventTowerReader } from '../input/event-towers.js';
import { describeGrid, sameGrid } from '../clustering/grid.js';
import { makeClusterer, type EngineName } from '../clustering/clusterers.js';
import { describeSettings } from '../clustering/describe-settings.js';
import { ToleranceMatcher, type ToleranceSettings } from './tolerance-compare.js';
import { describePileup, pileupStepsOn } from '../clustering/pileup/settings.js';
import { DEFAULT_PILEUP_SETTINGS, DEFAULT_SETTINGS, NO_GROOMING, type ClusterSettings, type Grid, type GroomingSettings, type PileupSettings } from '../types.js';
import { describeGrooming, groomingIsOn } from '../clustering/grooming/settings.js';
import { GroomedAgreement, type GroomedAgreementReport } from './groomed-agreement.js';
import { GroomedCoverage } from './groomed-coverage.js';
import { ValidationAccumulator } from './validation-accumulator.js';
import { TurnOnAccumulator, type TurnOnCurve, type TurnOnRequest } from './turn-on.js';
import type { ValidationReport } from './validation-report.js';

export interface CompareOptions {
  /**
   * the grid of CSV events, from the grid options; asked for only once the candidate is open,
   * so that an unreadable candidate is named before a bad grid option
   */
  csvGrid: () => Grid;
  /** grid options were given: an events file, which carries its own grid, must not be given them */
  gridGiven: boolean;
  /** CSV events: the largest jump of event numbers (csv-towers.ts) */
  maxEventGap?: number;
  /** caps on inflating gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
  /** the algorithm settings: `base` (the candidate header's, else the defaults) with the options over it */
  settingsOver: (base: ClusterSettings) => ClusterSettings;
  /**
   * the pileup steps of the reference side (spec part two): `base` (the candidate header's,
   * else none) with the options over it; the header's when absent
   */
  pileupOver?: (base: PileupSettings) => PileupSettings;
  /**
   * the grooming of the reference side (spec section 12): `base` (the candidate header's, else
   * none) with the options over it; the header's when absent
   */
  groomingOver?: (base: GroomingSettings) => GroomingSettings;
  tolerance: Omit<ToleranceSettings, 'ptMin'>;
  worst: number;
  /** what computes the reference jets (default: the reference) */
  engine?: EngineName;
  /** turn-on curves to fill (spec section 13), over the events compared; none when absent */
  turnOn?: TurnOnRequest[];
  /** notes for stderr (setting overrides, candidate without settings) */
  note: (line: string) => void;
  /** called once per record of EVENTS with its byte offset (a progress bar counts them) */
  onRecord?: (offset: number) => void;
}

export interface CompareResult {
  report: ValidationReport;
  settings: ClusterSettings;
  /** the pileup steps the reference side ran; null when none */
  pileup: PileupSettings | null;
  /** the grooming the reference side ran; null when none */
  grooming: GroomingSettings | null;
  /** groomed pt and mass of matched pairs, per groomer both sides carry (spec sections 7 and 12) */
  groomed: GroomedAgreementReport[];
  grid: Grid;
  candidate: { format: CandidateSource['format']; engine: string | null; producer: string | null };
  /** an input that became unreadable part way (the report covers what came before) */
  inputError: InputError | null;
  /** the turn-on curves asked for, in the order asked */
  turnOn: TurnOnCurve[];
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
  const candidate = await openCandidate(candidatePath, { inflate: options.inflate });
  let events: Awaited<ReturnType<typeof openEventSource>>;
  try {
    events = await openEventSource(eventsPath, { grid: options.csvGrid(), maxEventGap: options.maxEventGap, inflate: options.inflate });
  } catch (error) {
    await candidate.events.return(undefined as never);
    throw error;
  }
  const grid = events.header.grid;
  if (events.format === 'events-file' && options.gridGiven && !sameGrid(options.csvGrid(), grid)) {
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
  const settings = options.settingsOver(base);
  if (header?.settings) {
    for (const [key, name] of SETTING_NAMES) {
      if (key === 'ptMin' && settings.ptMin > header.settings.ptMin) {
        options.note(`jetlag compare: jets must agree above --ptmin ${settings.ptMin} GeV (the candidate was made with ptmin ${header.settings.ptMin})`);
        continue;
      }
      if (settings[key] !== header.settings[key]) {
        options.note(`jetlag compare: ${name} ${settings[key]} differs from the candidate header's ${key} ${header.settings[key]} (engine ${header.settings.engine}); using ${settings[key]}`);
      }
    }
    if (settings.ptMin < header.settings.ptMin) {
      options.note(`jetlag compare: the candidate kept only jets with pt >= ${header.settings.ptMin} GeV, so reference jets in [${settings.ptMin}, ${header.settings.ptMin}) GeV will be unmatched`);
    }
  } else {
    // a wrong setting here fails every event, so say which ones were used
    options.note(`jetlag compare: the candidate (${candidate.format}) names no algorithm settings; the reference uses ${describeSettings(settings)}` +
      ` from the options and defaults (threshold ${settings.threshold} GeV; give --algorithm, --radius, --threshold ... as the candidate was made)`);
  }

  const tolerance: ToleranceSettings = { ...options.tolerance, ptMin: settings.ptMin };
  const matcher = new ToleranceMatcher(tolerance);
  const accumulator = new ValidationAccumulator(tolerance, options.worst);
  const turnOnCurves = (options.turnOn ?? []).map((request) => new TurnOnAccumulator(request, settings.ptMin));
  // the reference side runs the same pileup chain as the candidate was made with (its header's
  // steps unless the options say otherwise): subtraction then applies before ptMin, as there
  const headerPileup = header?.settings?.pileup ?? DEFAULT_PILEUP_SETTINGS;
  const pileupAsked = options.pileupOver ? options.pileupOver(headerPileup) : headerPileup;
  const pileup = pileupStepsOn(pileupAsked) ? pileupAsked : null;
  if (header?.settings && describePileup(pileup) !== describePileup(header.settings.pileup)) {
    options.note(`jetlag compare: the reference runs ${describePileup(pileup) || 'no pileup steps'}; the candidate header names ${describePileup(header.settings.pileup) || 'none'}`);
  }
  const headerGrooming = header?.settings?.grooming ?? NO_GROOMING;
  const groomingAsked = options.groomingOver ? options.groomingOver(headerGrooming) : headerGrooming;
  const grooming = groomingIsOn(groomingAsked) ? groomingAsked : null;
  if (header?.settings && describeGrooming(grooming ?? NO_GROOMING) !== describeGrooming(headerGrooming)) {
    options.note(`jetlag compare: the reference grooms ${describeGrooming(grooming ?? NO_GROOMING) || 'nothing'}; the candidate header names ${describeGrooming(headerGrooming) || 'no grooming'}`);
  }
  const groomed = new GroomedAgreement(settings.ptMin, tolerance.ptTol);
  const groomedCoverage = new GroomedCoverage();
  let reference: ReturnType<typeof makeClusterer>;
  try {
    reference = makeClusterer(options.engine ?? 'reference', grid, { ...settings, ptMin: 0 }, null, pileup, 'compare', grooming);
  } catch (error) {
    await candidate.events.return(undefined as never);
    await events.records.return(undefined as never);
    throw error;
  }
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
      if (options.onRecord) options.onRecord(record.offset);
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
      if (jets.trim && mine.groomed?.trim) groomed.add('trim', matcher, jets.pt, jets.trim, mine.groomed.trim);
      if (jets.softDrop && mine.groomed?.softdrop) groomed.add('softdrop', matcher, jets.pt, jets.softDrop, mine.groomed.softdrop);
      groomedCoverage.add(jets, mine);
      // every event valid on both sides counts once in each curve (spec section 13)
      for (const curve of turnOnCurves) curve.add(jets.pt, jets.count, mine.pt, mine.count);
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
  for (const line of groomedCoverage.notes(candidate.format)) options.note(line);
  return {
    report: accumulator.report(),
    settings,
    pileup,
    grooming,
    groomed: groomed.report(),
    grid,
    candidate: { format: candidate.format, engine: header?.settings?.engine ?? null, producer: header?.producer ?? null },
    inputError: inputError ?? candidateState.error,
    turnOn: turnOnCurves.map((curve) => curve.curve()),
  };
}
