// An event file, a CSV tower file or a jets file written as CSV or JSON lines (the command is
// cli/commands/export.ts, whose header says what each form holds).
//
// CSV has no place for an invalid event: it is named through onProblem and left out. CSV rows
// of an event come together and event numbers never decrease (spec section 1), so an event
// with rows whose number is not above the last one written (a file out of order, or with an
// event twice) is named and left out too: the CSV stays readable and means what the file meant.
// Numbers are written with String(x), so every double reads back identical. A tower CSV of a
// grid other than the default states its grid in a `# grid` line before the header
// (input/csv-grid.ts), so that it reads back on the grid it came from.

import { InputError, UsageError } from '../errors.js';
import { openRecordFile, type RecordSource } from '../input/event-source.js';
import type { InflateLimits } from '../input/input-chunks.js';
import { CANDIDATE_CSV_HEADERS } from '../input/candidate-csv.js';
import { EventTowerReader } from '../input/event-towers.js';
import { decodeJetsRecord } from '../formats/jets-codec.js';
import { formatErrorLine, formatJetsLine, jsonNumber, type EventLineFigures } from '../formats/jets-jsonl.js';
import { TextFileWriter } from './text-file-writer.js';
import { csvGridLine } from '../input/csv-grid.js';
import { sameGrid } from '../clustering/grid.js';
import { DEFAULT_GRID } from '../types.js';
import type { Grid, GroomingSettings, JetSet } from '../types.js';
import { groomedCsvCells, groomedCsvHeader } from './groomed-csv.js';
import { EVENT_CSV_SUFFIX } from '../formats/event-csv-columns.js';

/** the jets CSV columns: the CSV form `jetlag compare` reads (candidate-reader.ts) */
export const JETS_CSV_HEADER = 'event,pt,y,phi,m';
/**
 * jets made with pileup steps (the jets file header names them): each jet's ghosts, area and
 * ptRaw, then its event's rho, etCut, killed and subtractedAway, repeated on every row of the
 * event (an event without jets has no row, so its values are not in the CSV)
 */
export const PILEUP_JETS_CSV_HEADER = CANDIDATE_CSV_HEADERS[2];

/** events-csv: a jets file's events, one row each (`EVENTS_CSV_HEADER`), those without jets too */
export type TextFormat = 'csv' | 'jsonl' | 'events-csv';

/** one row per valid event of a jets file: its number, jets, time clustering and towers */
export const EVENTS_CSV_HEADER = 'event,jets,cluster_time_ns,towers';

export interface ExportTally {
  events: number;
  rows: number;
  invalid: number;
  broken: number;
  /** CSV: events with rows left out because their number is not above the last written */
  outOfOrder: number;
  /** CSV: number of the last event that has rows in the output, -1 before the first */
  lastCsvEvent: number;
  /** raw deposits outside the grid's eta range, binned nowhere (reported, spec section 1) */
  outsideAcceptance: number;
}

export interface TextExportOptions {
  /** a path, or a stream for - */
  input: string | NodeJS.ReadableStream;
  /** the input's name in messages */
  fileLabel: string;
  /** the grid of CSV towers when grid options were given */
  grid?: Grid;
  maxRecordBytes?: number;
  /** CSV input: the largest jump of event numbers (csv-towers.ts) */
  maxEventGap?: number;
  /** caps on inflating gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
  /** replace an existing output file */
  force?: boolean;
  format: TextFormat;
  /** output path, - for stdout */
  out: string;
  /** the stream - stands for */
  stdout: NodeJS.WritableStream;
  /** one line per event left out or record that cannot be read */
  onProblem: (line: string) => void;
  /** called once per input record with its byte offset (a progress bar counts them) */
  onRecord?: (offset: number) => void;
}

export interface TextExportResult {
  tally: ExportTally;
  /** what the rows are: jets or events (a jets file) or towers */
  rowsAre: 'jets' | 'towers' | 'events';
  /** the input became unreadable here; everything before it was written */
  unreadable: InputError | null;
}

/** Reads the file and writes it as text; the output is closed (or removed on an unexpected error). */
export async function exportAsText(options: TextExportOptions): Promise<TextExportResult> {
  const { format, onProblem, onRecord } = options;
  const source = await openRecordFile(options.input, { grid: options.grid, maxRecordBytes: options.maxRecordBytes, maxEventGap: options.maxEventGap, fileLabel: options.fileLabel, inflate: options.inflate });
  if (format === 'events-csv' && source.format !== 'jets-file') {
    await source.records.return(undefined);
    throw new UsageError(`export: --format events-csv takes a jets file; ${source.label} holds towers (use csv or jsonl)`);
  }
  const out = await TextFileWriter.open(options.out, { stdout: options.stdout, force: options.force });
  const tally: ExportTally = { events: 0, rows: 0, invalid: 0, broken: 0, outOfOrder: 0, lastCsvEvent: -1, outsideAcceptance: 0 };
  let unreadable: InputError | null = null;
  try {
    if (source.format === 'jets-file') await exportJets(source, format, out, tally, onProblem, onRecord);
    else await exportEvents(source, format, out, tally, onProblem, onRecord);
  } catch (error) {
    if (!(error instanceof InputError)) {
      await out.abort();
      throw error;
    }
    unreadable = error;
  }
  await out.close();
  return { tally, rowsAre: format === 'events-csv' ? 'events' : source.format === 'jets-file' ? 'jets' : 'towers', unreadable };
}

/** CSV only: true when the rows of `event` can follow those written so far; else counts and reports it. */
function csvOrderAllows(event: number, tally: ExportTally, onProblem: (line: string) => void, where: string): boolean {
  if (event > tally.lastCsvEvent) {
    tally.lastCsvEvent = event;
    return true;
  }
  tally.outOfOrder++;
  onProblem(`${where}: event ${event} after event ${tally.lastCsvEvent} cannot follow it in CSV, whose event numbers must increase (left out)`);
  return false;
}

async function exportEvents(source: RecordSource, format: TextFormat, out: TextFileWriter, tally: ExportTally, onProblem: (line: string) => void, onRecord?: (offset: number) => void): Promise<void> {
  const reader = new EventTowerReader(source.header.grid);
  const phiBins = source.header.grid.phiBins;
  if (format === 'csv') {
    if (!sameGrid(source.header.grid, DEFAULT_GRID)) await out.write(csvGridLine(source.header.grid));
    await out.write('event,ieta,iphi,et\n');
  }
  for await (const record of source.records) {
    tally.events++;
    if (onRecord) onRecord(record.offset);
    const result = reader.read(record.bytes);
    if (!result.ok) {
      tally.invalid++;
      const where = result.event === undefined ? `record ${tally.events - 1}` : `event ${result.event}`;
      if (format === 'csv') {
        onProblem(`${source.label}, ${where}, byte ${record.offset}: ${result.problem} (invalid event, no CSV rows written)`);
      } else {
        onProblem(`${source.label}, ${where}, byte ${record.offset}: ${result.problem} (invalid event, written as an error line)`);
        if (result.event !== undefined) await out.write(formatErrorLine(result.event, result.problem) + '\n');
      }
      continue;
    }
    const { event, towerIndex, towerEt } = result;
    tally.outsideAcceptance += result.outsideAcceptance;
    if (format === 'csv' && towerIndex.length > 0 && !csvOrderAllows(event, tally, onProblem, `${source.label}, event ${event}, byte ${record.offset}`)) continue;
    tally.rows += towerIndex.length;
    if (format === 'csv') {
      let text = '';
      for (let k = 0; k < towerIndex.length; k++) {
        const index = towerIndex[k];
        text += `${event},${Math.floor(index / phiBins)},${index % phiBins},${jsonNumber(towerEt[k])}\n`;
      }
      if (text.length > 0) await out.write(text);
    } else {
      const towers: string[] = [];
      for (let k = 0; k < towerIndex.length; k++) {
        const index = towerIndex[k];
        towers.push(`[${Math.floor(index / phiBins)},${index % phiBins},${jsonNumber(towerEt[k])}]`);
      }
      await out.write(`{"event":${event},"towers":[${towers.join(',')}]}\n`);
    }
  }
}

function jetCsvRows(event: number, jets: JetSet, grooming: GroomingSettings | undefined, figures: EventLineFigures): string {
  let text = '';
  const pileup = jets.pileup;
  const perEvent = pileup ? `,${jsonNumber(pileup.rho)},${jsonNumber(pileup.etCut)},${pileup.killed},${pileup.subtractedAway}` : '';
  // an empty towers cell: the record does not say (an older file), never an invented 0
  const timeAndTowers = `,${figures.clusterTimeNs},${figures.eventTowers ?? ''}`;
  for (let k = 0; k < jets.count; k++) {
    text += `${event},${jsonNumber(jets.pt[k])},${jsonNumber(jets.rapidity[k])},${jsonNumber(jets.phi[k])},${jsonNumber(jets.mass[k])}`;
    if (pileup) text += `,${pileup.ghosts[k]},${jsonNumber(pileup.area[k])},${jsonNumber(pileup.ptRaw[k])}${perEvent}`;
    if (grooming) text += groomedCsvCells(jets, k, grooming);
    text += timeAndTowers + '\n';
  }
  return text;
}

async function exportJets(source: RecordSource, format: TextFormat, out: TextFileWriter, tally: ExportTally, onProblem: (line: string) => void, onRecord?: (offset: number) => void): Promise<void> {
  const withPileup = source.header.settings?.pileup !== undefined;
  // trimming and soft drop (spec section 12): their columns follow the others, when they ran
  const grooming = source.header.settings?.grooming;
  if (format === 'csv') await out.write(`${withPileup ? PILEUP_JETS_CSV_HEADER : JETS_CSV_HEADER}${groomedCsvHeader(grooming)}${EVENT_CSV_SUFFIX}\n`);
  if (format === 'events-csv') await out.write(EVENTS_CSV_HEADER + '\n');
  let record = -1;
  for await (const raw of source.records) {
    record++;
    tally.events++;
    if (onRecord) onRecord(raw.offset);
    let decoded;
    try {
      decoded = decodeJetsRecord(raw.bytes, { pileup: withPileup, trim: !!grooming?.trim, softDrop: !!grooming?.softDrop });
    } catch (error) {
      tally.broken++;
      onProblem(`${source.label}, record ${record}, byte ${raw.offset}: bad jets record: ${(error as Error).message}`);
      continue;
    }
    if (decoded.problem !== '') {
      tally.broken++;
      onProblem(`${source.label}, event ${decoded.event}, byte ${raw.offset}: bad jets record: ${decoded.problem}`);
      continue;
    }
    if (decoded.error !== '') {
      tally.invalid++;
      if (format === 'jsonl') {
        await out.write(formatErrorLine(decoded.event, decoded.error) + '\n');
      } else {
        onProblem(`${source.label}, event ${decoded.event}, byte ${raw.offset}: ${decoded.error} (invalid event, no CSV rows written)`);
      }
      continue;
    }
    if (format === 'events-csv') {
      if (!csvOrderAllows(decoded.event, tally, onProblem, `${source.label}, event ${decoded.event}, byte ${raw.offset}`)) continue;
      tally.rows++;
      // an empty towers cell: the record does not say (an older file), never an invented 0
      await out.write(`${decoded.event},${decoded.jets.count},${decoded.clusterTimeNs},${decoded.eventTowers ?? ''}\n`);
      continue;
    }
    if (format === 'csv' && decoded.jets.count > 0 && !csvOrderAllows(decoded.event, tally, onProblem, `${source.label}, event ${decoded.event}, byte ${raw.offset}`)) continue;
    tally.rows += decoded.jets.count;
    await out.write(format === 'csv'
      ? jetCsvRows(decoded.event, decoded.jets, grooming, decoded)
      : formatJetsLine(decoded.event, decoded.jets, decoded.hasTowers, decoded) + '\n');
  }
}
