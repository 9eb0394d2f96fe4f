// A CSV tower file (clustering-spec.md section 1) into an event file (the command is
// cli/commands/import.ts). Every event number comes through: an invalid CSV event becomes an
// event record carrying its error text (with the CSV byte offset of the offending row), and
// empty events (numbers with no rows) become empty records. When a line makes the rest of the
// CSV unreadable, the events before it are still written; when nothing could be read at all,
// no output is left behind.

import { InputError } from '../errors.js';
import { readCsvTowers } from '../input/csv-towers.js';
import { EventFileWriter } from './record-writer.js';
import type { Grid } from '../types.js';
import { producerName } from '../version.js';

export interface CsvImportOptions {
  /** a path, or a stream for - */
  csv: string | NodeJS.ReadableStream;
  /** the CSV's name in messages and error records */
  csvLabel: string;
  grid: Grid;
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
  const writer = await EventFileWriter.open(
    options.out,
    { grid: options.grid, producer: producerName('import'), label: options.label },
    { gzip: options.gzip, stdout: options.stdout },
  );
  let events = 0;
  let towers = 0;
  let invalid = 0;
  let unreadable: InputError | null = null;
  try {
    for await (const event of readCsvTowers(options.csv, { grid: options.grid, fileLabel: csvLabel })) {
      events++;
      if (event.problem !== null) {
        invalid++;
        options.onInvalid(`${csvLabel}, event ${event.event}, byte ${event.offset}: ${event.problem} (kept as an invalid event)`);
        await writer.writeEvent({ event: event.event, error: `${event.problem} (CSV ${csvLabel}, row at byte ${event.offset})` });
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
