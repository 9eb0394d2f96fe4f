// A CSV tower file (clustering-spec.md section 1) into an event file (the command is
// cli/commands/import.ts). Every event number comes through: an invalid CSV event becomes an
// event record carrying its error text (with the CSV line and byte offset of the offending
// row), and
// empty events (numbers with no rows) become empty records. When a line makes the rest of the
// CSV unreadable, the events before it are still written; when nothing could be read at all,
// no output is left behind.

import { describePlace, InputError } from '../errors.js';
import { openCsvTowers } from '../input/csv-towers.js';
import type { InflateLimits } from '../input/input-chunks.js';
import { EventFileWriter } from './record-writer.js';
import type { Grid } from '../types.js';
import { producerName } from '../version.js';

export interface CsvImportOptions {
  /** a path, or a stream for - */
  csv: string | NodeJS.ReadableStream;
  /** the CSV's name in messages and error records */
  csvLabel: string;
  /** the grid when the CSV states none (a CSV that states its grid is read on that) */
  grid: Grid;
  /** the largest jump of event numbers (csv-towers.ts) */
  maxEventGap?: number;
  /** caps on inflating gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
  /** replace an existing output file */
  force?: boolean;
  /** event file path, - for stdout */
  out: string;
  /** free text for the file header */
  label: string;
  gzip: boolean;
  /** the stream - stands for */
  stdout: NodeJS.WritableStream;
  /** one line per invalid CSV event (kept as an invalid event record) */
  onInvalid: (line: string) => void;
}

export interface CsvImportResult {
  events: number;
  towers: number;
  invalid: number;
  /** the CSV became unreadable here; the events before it were written (none: no output) */
  unreadable: InputError | null;
}

export async function importCsvTowers(options: CsvImportOptions): Promise<CsvImportResult> {
  const { csvLabel } = options;
  let opened;
  try {
    opened = await openCsvTowers(options.csv, { grid: options.grid, fileLabel: csvLabel, maxEventGap: options.maxEventGap, inflate: options.inflate });
  } catch (error) {
    // no such file, or a grid statement that cannot be used: nothing is written
    if (error instanceof InputError) return { events: 0, towers: 0, invalid: 0, unreadable: error };
    throw error;
  }
  let writer: EventFileWriter;
  try {
    writer = await EventFileWriter.open(
      options.out,
      { grid: opened.grid, producer: producerName('import'), label: options.label },
      { gzip: options.gzip, stdout: options.stdout, force: options.force },
    );
  } catch (error) {
    await opened.events.return(undefined);
    throw error;
  }
  let events = 0;
  let towers = 0;
  let invalid = 0;
  let unreadable: InputError | null = null;
  try {
    for await (const event of opened.events) {
      events++;
      if (event.problem !== null) {
        invalid++;
        options.onInvalid(`${describePlace(csvLabel, event.event, event.line, event.offset)}: ${event.problem} (kept as an invalid event)`);
        await writer.writeEvent({ event: event.event, error: `${event.problem} (CSV ${csvLabel}, line ${event.line}, byte ${event.offset})` });
        continue;
      }
      towers += event.towerIndex.length;
      await writer.writeEvent({ event: event.event, towerIndex: event.towerIndex, towerEt: event.towerEt });
    }
  } catch (error) {
    if (!(error instanceof InputError)) {
      await writer.abort();
      throw error;
    }
    unreadable = error;
  }
  // nothing read at all (no such file, no header line): leave no output behind
  if (unreadable && events === 0) await writer.abort();
  else await writer.close();
  return { events, towers, invalid, unreadable };
}
