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
import { EventTowerReader } from '../input/event-towers.js';
import { sameGrid } from '../clustering/grid.js';
import { emptyJetSet } from '../formats/jets-codec.js';
import { JetsFileWriter } from '../output/jets-writer.js';
import { formatErrorLine, formatJetsLine } from '../formats/jets-jsonl.js';
import { TextFileWriter } from '../output/record-writer.js';
import type { ClusterSettings, Grid } from '../types.js';
import { producerName } from '../version.js';

export interface ClusterFileOptions {
  input: string;
  /** the grid of CSV towers when grid options were given; an events file carries its own */
  grid?: Grid;
  maxRecordBytes?: number;
  /** CSV towers: the largest jump of event numbers (csv-towers.ts) */
  maxEventGap?: number;
  /** replace an existing output file */
  force?: boolean;
  engine: EngineName;
  emulation: EmulationMode | null;
  settings: ClusterSettings;
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
}

export async function clusterFile(options: ClusterFileOptions): Promise<ClusterFileResult> {
  const { settings, withTowers, out } = options;
  const source = await openEventSource(options.input, { grid: options.grid, maxRecordBytes: options.maxRecordBytes, maxEventGap: options.maxEventGap });
  if (source.format === 'events-file' && options.grid !== undefined && !sameGrid(options.grid, source.header.grid)) {
    throw new UsageError(`cluster: ${source.label} carries its own grid; the grid options apply to CSV tower files only`);
  }
  const grid = source.header.grid;
  const clusterer = makeClusterer(options.engine, grid, settings, options.emulation);
  if ('withTowers' in clusterer) (clusterer as { withTowers: boolean }).withTowers = withTowers;
  const engineName = options.emulation ? emulationName(options.emulation) : clusterer.name;
  // the window finder's settings live in its engine name; the label spells them out, and says
  // that p and R in the header are those of the reference it is meant to be compared with
  const window = options.emulation !== null && typeof options.emulation === 'object' && 'window' in options.emulation ? options.emulation.window : null;
  const windowLabel = window ? `${describeWindow(window)} (algorithm and R: the reference to compare with); ` : '';
  const reader = new EventTowerReader(grid);

  const jetsFile = options.format === 'jets'
    ? await JetsFileWriter.open(out, grid, { ...settings, engine: engineName },
      { producer: producerName('cluster'), label: options.label ?? `${windowLabel}jets of ${source.label}` },
      { gzip: options.gzip, stdout: options.stdout, force: options.force })
    : null;
  const lines = options.format === 'jsonl' ? await TextFileWriter.open(out, { stdout: options.stdout, force: options.force }) : null;

  let events = 0;
  let invalid = 0;
  let outsideAcceptance = 0;
  let unreadable: InputError | null = null;
  try {
    try {
      for await (const record of source.records) {
        events++;
        const towers = reader.read(record.bytes);
        if (!towers.ok) {
          invalid++;
          const where = towers.event !== undefined ? `event ${towers.event}` : `record ${events - 1}`;
          options.onInvalid(`${source.label}, ${where}, byte ${record.offset}: ${towers.problem}`);
          const event = towers.event ?? -1;
          if (event >= 0) {
            const pending = jetsFile ? jetsFile.writeJets({ event, jets: emptyJetSet(), error: towers.problem }) : lines!.write(formatErrorLine(event, towers.problem) + '\n');
            if (pending) await pending;
          }
          continue;
        }
        outsideAcceptance += towers.outsideAcceptance;
        const started = process.hrtime.bigint();
        const jets = clusterer.cluster(towers.towerIndex, towers.towerEt);
        const clusterTimeNs = Number(process.hrtime.bigint() - started);
        const pending = jetsFile
          ? jetsFile.writeJets({ event: towers.event, jets, clusterTimeNs })
          : lines!.write(formatJetsLine(towers.event, jets, withTowers) + '\n');
        if (pending) await pending;
      }
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      unreadable = error;
    }
    await (jetsFile ?? lines)!.close();
  } catch (error) {
    await (jetsFile ?? lines)!.abort();
    throw error;
  }
  return { engineName, events, invalid, outsideAcceptance, unreadable };
}
