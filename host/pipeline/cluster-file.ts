// Every event of a file through one clusterer, in this thread, jets out as a jets file or JSON
// lines (the command is cli/commands/cluster.ts; the streamed, timed run over a worker pool is
// run.ts).
//
// Invalid events are named through onInvalid (file, event, byte offset), written to the output
// as error records so no event number is lost, and counted; the file goes on. When the input
// becomes unreadable, everything before the problem is written and kept, and the error is
// returned rather than thrown.

import { InputError, UsageError } from '../errors.js';
import { makeClusterer, type EngineName } from '../clustering/clusterers.js';
import { emulationName, type EmulationMode } from '../clustering/emulation-mode.js';
import { describeWindow } from '../clustering/window-finder.js';
import { openEventSource } from '../input/event-source.js';
import type { InflateLimits } from '../input/input-chunks.js';
import { EventTowerReader } from '../input/event-towers.js';
import { MIN_ET, sameGrid } from '../clustering/grid.js';
import { emptyJetSet } from '../formats/jets-codec.js';
import { JetsFileWriter } from '../output/jets-writer.js';
import { formatErrorLine, formatJetsLine } from '../formats/jets-jsonl.js';
import { TextFileWriter } from '../output/text-file-writer.js';
import { describePileup, pileupStepsOn } from '../clustering/pileup/settings.js';
import { describeGrooming, groomingIsOn } from '../clustering/grooming/settings.js';
import type { ClusterSettings, Grid, GroomingSettings, PileupSettings } from '../types.js';
import { producerName } from '../version.js';
import { ExecEngineError, type ExecCounts, type ExecOutcome } from './exec-engine.js';
import { ProgramTimes, startProgramEngine, type ProgramEngineChoice, type ProgramFigures } from './exec-cluster.js';

export interface ClusterFileOptions {
  input: string;
  /** the grid of CSV towers when grid options were given; an events file carries its own */
  grid?: Grid;
  maxRecordBytes?: number;
  /** CSV towers: the largest jump of event numbers (csv-towers.ts) */
  maxEventGap?: number;
  /** caps on inflating gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
  /** replace an existing output file */
  force?: boolean;
  engine: EngineName;
  emulation: EmulationMode | null;
  /** an outside program as the engine (--engine exec:…): `engine` and `emulation` are then unused */
  program?: ProgramEngineChoice;
  settings: ClusterSettings;
  /** the pileup steps around the clustering (spec part two); none when absent */
  pileup?: PileupSettings | null;
  /** trimming and soft drop of each reported jet (spec section 12); none when absent */
  grooming?: GroomingSettings | null;
  /** write each jet's constituent tower indices */
  withTowers: boolean;
  format: 'jets' | 'jsonl';
  /** output path, - for stdout */
  out: string;
  /** gzip a jets file */
  gzip: boolean;
  /** the jets file header's label (default: "jets of" the input's label) */
  label?: string;
  /** the stream - stands for */
  stdout: NodeJS.WritableStream;
  /** one line per invalid event: file, event or record, byte offset, problem */
  onInvalid: (line: string) => void;
  /** called once per input record with its byte offset (a progress bar counts them) */
  onRecord?: (offset: number) => void;
}

export interface ClusterFileResult {
  /** the clusterer's name, as written in the jets file header */
  engineName: string;
  events: number;
  invalid: number;
  /** raw deposits outside the grid's eta range: reported, not an error (spec section 1) */
  outsideAcceptance: number;
  /** the input became unreadable here; the events before it were clustered and written */
  unreadable: InputError | null;
  /** an engine program: events it failed (written as error records), its counts and times */
  failed: number;
  program: { counts: ExecCounts; figures: ProgramFigures } | null;
  /** the engine program used up its restarts here; the events before were written */
  stopped: ExecEngineError | null;
  /** events written to the output (clustered, failed, and invalid ones with an event number) */
  written: number;
}

/** An event given to the program and not yet written: its outcome (or what the submit threw) and its tower count. */
interface QueuedEvent {
  outcome: Promise<ExecOutcome | { thrown: unknown }>;
  towers: number;
}

/** Towers with et above the threshold: the count `run` records per event (cluster-batch.ts readEvents). */
function towersEnteringClustering(towerEt: Float64Array, threshold: number): number {
  let count = 0;
  for (let t = 0; t < towerEt.length; t++) {
    const et = towerEt[t];
    if (et > threshold && et >= MIN_ET) count++;
  }
  return count;
}

export async function clusterFile(options: ClusterFileOptions): Promise<ClusterFileResult> {
  const { settings, withTowers, out } = options;
  const source = await openEventSource(options.input, { grid: options.grid, maxRecordBytes: options.maxRecordBytes, maxEventGap: options.maxEventGap, inflate: options.inflate });
  if (source.format === 'events-file' && options.grid !== undefined && !sameGrid(options.grid, source.header.grid)) {
    throw new UsageError(`cluster: ${source.label} carries its own grid; the grid options apply to CSV tower files only`);
  }
  const grid = source.header.grid;
  const pileup = pileupStepsOn(options.pileup) ? options.pileup : null;
  if (options.program && pileup) throw new UsageError('cluster: an engine program runs the plain clustering only; leave out --areas, --rho, --subtract and --softkiller');
  const grooming = groomingIsOn(options.grooming) ? options.grooming : null;
  if (options.program && grooming) throw new UsageError('cluster: an engine program runs the plain clustering only; leave out --trim and --softdrop');
  const program = options.program ? await startProgramEngine(options.program, grid, settings, source.label, options.maxRecordBytes) : null;
  const programTimes = new ProgramTimes();
  // an output that cannot be opened (it exists, no --force) ends the program too, or it would keep jetlag alive
  const closeProgramAndThrow = async (error: unknown): Promise<never> => {
    await program?.close();
    throw error;
  };
  const clusterer = program ? null : makeClusterer(options.engine, grid, settings, options.emulation, pileup, 'cluster', grooming);
  if (clusterer && 'withTowers' in clusterer) (clusterer as { withTowers: boolean }).withTowers = withTowers;
  const engineName = program ? program.engineName || options.program!.label : options.emulation ? emulationName(options.emulation) : clusterer!.name;
  // the window finder's settings live in its engine name; the label spells them out, and says
  // that p and R in the header are those of the reference it is meant to be compared with
  const window = options.emulation !== null && typeof options.emulation === 'object' && 'window' in options.emulation ? options.emulation.window : null;
  const windowLabel = window ? `${describeWindow(window)} (algorithm and R: the reference to compare with); ` : '';
  const pileupLabel = `${pileup ? `${describePileup(pileup)}; ` : ''}${grooming ? `${describeGrooming(grooming)}; ` : ''}`;
  const reader = new EventTowerReader(grid);

  const jetsFile = options.format === 'jets'
    ? await JetsFileWriter.open(out, grid, { ...settings, engine: engineName, ...(pileup ? { pileup } : {}), ...(grooming ? { grooming } : {}) },
      { producer: producerName('cluster'), label: options.label ?? `${windowLabel}${pileupLabel}jets of ${source.label}` },
      { gzip: options.gzip, stdout: options.stdout, force: options.force }).catch(closeProgramAndThrow)
    : null;
  const lines = options.format === 'jsonl' ? await TextFileWriter.open(out, { stdout: options.stdout, force: options.force }).catch(closeProgramAndThrow) : null;

  let events = 0;
  let invalid = 0;
  let outsideAcceptance = 0;
  let unreadable: InputError | null = null;
  let failed = 0;
  let stopped: ExecEngineError | null = null;
  let written = 0;
  // --engine-in-flight: up to this many events are given to the program before the oldest
  // answer is written; the output stays in input order
  const programWindow = options.program?.maxInFlight ?? 1;
  const queued: QueuedEvent[] = [];
  const writeOldest = async (): Promise<void> => {
    const { outcome: settling, towers: eventTowers } = queued.shift()!;
    const outcome = await settling;
    if ('thrown' in outcome) throw outcome.thrown;
    written++;
    if (!outcome.ok) {
      // the program's fault, named by onFault; the event keeps its number in the output
      failed++;
      const pending = jetsFile ? jetsFile.writeJets({ event: outcome.event, jets: emptyJetSet(), error: outcome.message }) : lines!.write(formatErrorLine(outcome.event, outcome.message) + '\n');
      if (pending) await pending;
      return;
    }
    const jets = withTowers ? outcome.jets : { ...outcome.jets, towers: new Int32Array(0) };
    programTimes.add(outcome.serviceNs, outcome.roundTripNs);
    const pending = jetsFile
      ? jetsFile.writeJets({ event: outcome.event, jets, clusterTimeNs: outcome.serviceNs, eventTowers })
      : lines!.write(formatJetsLine(outcome.event, jets, withTowers) + '\n');
    if (pending) await pending;
  };
  try {
    try {
      for await (const record of source.records) {
        events++;
        if (options.onRecord) options.onRecord(record.offset);
        const towers = reader.read(record.bytes);
        if (!towers.ok) {
          while (queued.length > 0) await writeOldest();
          invalid++;
          const where = towers.event !== undefined ? `event ${towers.event}` : `record ${events - 1}`;
          options.onInvalid(`${source.label}, ${where}, byte ${record.offset}: ${towers.problem}`);
          const event = towers.event ?? -1;
          // a record with no event number has nothing to write under, and is not counted as written
          if (event >= 0) {
            written++;
            const pending = jetsFile ? jetsFile.writeJets({ event, jets: emptyJetSet(), error: towers.problem }) : lines!.write(formatErrorLine(event, towers.problem) + '\n');
            if (pending) await pending;
          }
          continue;
        }
        outsideAcceptance += towers.outsideAcceptance;
        if (program) {
          // the towers are encoded as the event is given; the reader's buffers may then be reused
          const submitted = program.submit(towers.event, towers.towerIndex, towers.towerEt).catch((thrown: unknown) => ({ thrown }));
          queued.push({ outcome: submitted, towers: towersEnteringClustering(towers.towerEt, settings.threshold) });
          while (queued.length >= programWindow) await writeOldest();
          continue;
        }
        const started = process.hrtime.bigint();
        const jets = clusterer!.cluster(towers.towerIndex, towers.towerEt);
        const clusterTimeNs = Number(process.hrtime.bigint() - started);
        written++;
        const pending = jetsFile
          ? jetsFile.writeJets({ event: towers.event, jets, clusterTimeNs, eventTowers: towersEnteringClustering(towers.towerEt, settings.threshold) })
          : lines!.write(formatJetsLine(towers.event, jets, withTowers) + '\n');
        if (pending) await pending;
      }
    } catch (error) {
      if (error instanceof ExecEngineError) stopped = error;
      else if (!(error instanceof InputError)) throw error;
      else unreadable = error;
    }
    // the events still with the program, unless it stopped
    try {
      while (stopped === null && queued.length > 0) await writeOldest();
    } catch (error) {
      if (!(error instanceof ExecEngineError)) throw error;
      stopped = error;
    }
    await program?.close();
    await (jetsFile ?? lines)!.close();
  } catch (error) {
    await program?.close();
    await (jetsFile ?? lines)!.abort();
    throw error;
  }
  const programRun = program ? { counts: { ...program.counts }, figures: programTimes.figures() } : null;
  return { engineName, events, invalid, outsideAcceptance, unreadable, failed, program: programRun, stopped, written };
}
