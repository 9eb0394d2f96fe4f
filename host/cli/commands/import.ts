// jetlag import --csv FILE --out EVENTS: a CSV tower file (clustering-spec.md section 1) into
// an event file. Every event number comes through: an invalid CSV event becomes an event
// record carrying its error text (with the CSV byte offset of the offending row), and empty
// events (numbers with no rows) become empty records. When a line makes the rest of the CSV
// unreadable, the events before it are still written and the command exits 2.

import { parseArgs, type CommandIo, type CommandMain, type CommandSpec } from '../args.js';
import { InputError, UsageError } from '../../errors.js';
import { GRID_OPTIONS, gridFrom } from '../common-options.js';
import { readCsvTowers } from '../../input/csv-towers.js';
import { EventFileWriter } from '../../output/record-writer.js';
import { producerName } from '../../version.js';

export const spec: CommandSpec = {
  name: 'import',
  summary: 'Turn a CSV tower file (header event,ieta,iphi,et) into an event file; invalid CSV events are kept with their error text.',
  usage: 'jetlag import --csv <file> --out <events> [options]',
  positionals: { min: 0, max: 0 },
  options: [
    { name: 'csv', kind: 'string', argument: '<file>', description: 'CSV tower file, plain or gzip; - for stdin (required)' },
    { name: 'out', kind: 'string', argument: '<events>', description: 'event file to write; - for stdout (required)' },
    ...GRID_OPTIONS,
    { name: 'label', kind: 'string', argument: '<text>', description: 'free text stored in the file header (default: none)' },
    { name: 'gzip', kind: 'flag', description: 'compress the event file with gzip (default: off)' },
    { name: 'quiet', kind: 'flag', short: 'q', description: 'do not print the per-event problems and the summary line' },
  ],
};

/** problem lines printed before the rest are only counted */
const PROBLEM_LINES_MAX = 20;

export const main: CommandMain = async (argv: string[], io: CommandIo) => {
  const args = parseArgs(spec, argv);
  const csv = args.values.csv as string | undefined;
  const out = args.values.out as string | undefined;
  if (csv === undefined) throw new UsageError('import: --csv <file> is required');
  if (out === undefined) throw new UsageError('import: --out <events> is required');
  const grid = gridFrom(args, 'import');
  const quiet = args.values.quiet === true;
  const csvLabel = csv === '-' ? '<stdin>' : csv;
  const outLabel = out === '-' ? '<stdout>' : out;

  const writer = await EventFileWriter.open(
    out,
    { grid, producer: producerName('import'), label: (args.values.label as string | undefined) ?? '' },
    { gzip: args.values.gzip === true, stdout: io.stdout },
  );
  let events = 0;
  let towers = 0;
  let invalid = 0;
  let unreadable: InputError | null = null;
  try {
    for await (const event of readCsvTowers(csv === '-' ? io.stdin : csv, { grid, fileLabel: csvLabel })) {
      events++;
      if (event.problem !== null) {
        invalid++;
        if (!quiet && invalid <= PROBLEM_LINES_MAX) {
          io.stderr.write(`jetlag import: ${csvLabel}, event ${event.event}, byte ${event.offset}: ${event.problem} (kept as an invalid event)\n`);
        }
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
  if (unreadable && events === 0) {
    // nothing read at all (no such file, no header line): leave no output behind
    await writer.abort();
    io.stderr.write(`jetlag import: ${unreadable.message}\n`);
    return 2;
  }
  await writer.close();
  if (!quiet && invalid > PROBLEM_LINES_MAX) io.stderr.write(`jetlag import: ... and ${invalid - PROBLEM_LINES_MAX} more invalid events\n`);
  if (unreadable) {
    io.stderr.write(`jetlag import: ${unreadable.message}; ${events === 1 ? '1 event' : `${events} events`} before it written to ${outLabel}\n`);
    return 2;
  }
  if (!quiet) io.stderr.write(`jetlag import: wrote ${events} events (${towers} towers, ${invalid} invalid) to ${outLabel}\n`);
  return 0;
};
