// jetlag import --csv FILE --out EVENTS: a CSV tower file (clustering-spec.md section 1) into
// an event file. Every event number comes through: an invalid CSV event becomes an event
// record carrying its error text (with the CSV byte offset of the offending row), and empty
// events (numbers with no rows) become empty records. When a line makes the rest of the CSV
// unreadable, the events before it are still written and the command exits 2. How:
// output/csv-import.ts.

import { parseArgs, type CommandIo, type CommandMain, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import { FORCE_OPTION, GRID_OPTIONS, INFLATE_OPTIONS, MAX_EVENT_GAP_OPTION, gridFrom, inflateLimitsFrom, maxEventGapFrom } from '../common-options.js';
import { importCsvTowers } from '../../output/csv-import.js';

export const spec: CommandSpec = {
  name: 'import',
  summary: 'Turn a CSV tower file (header event,ieta,iphi,et) into an event file; invalid CSV events are kept with their error text.',
  usage: 'jetlag import --csv <file> --out <events> [options]',
  positionals: { min: 0, max: 0 },
  options: [
    { name: 'csv', kind: 'string', argument: '<file>', description: 'CSV tower file, plain or gzip; - for stdin (required)' },
    { name: 'out', kind: 'string', argument: '<events>', description: 'event file to write; - for stdout (required)' },
    ...GRID_OPTIONS,
    MAX_EVENT_GAP_OPTION,
    ...INFLATE_OPTIONS,
    FORCE_OPTION,
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
  const outLabel = out === '-' ? '<stdout>' : out;

  let shown = 0;
  const { events, towers, invalid, unreadable } = await importCsvTowers({
    csv: csv === '-' ? io.stdin : csv,
    csvLabel: csv === '-' ? '<stdin>' : csv,
    grid,
    maxEventGap: maxEventGapFrom(args, 'import'),
    inflate: inflateLimitsFrom(args, 'import'),
    force: args.values.force === true,
    out,
    label: (args.values.label as string | undefined) ?? '',
    gzip: args.values.gzip === true,
    stdout: io.stdout,
    onInvalid: (line) => {
      if (!quiet && shown++ < PROBLEM_LINES_MAX) io.stderr.write(`jetlag import: ${line}\n`);
    },
  });
  if (unreadable && events === 0) {
    io.stderr.write(`jetlag import: ${unreadable.message}\n`);
    return 2;
  }
  if (!quiet && invalid > PROBLEM_LINES_MAX) io.stderr.write(`jetlag import: ... and ${invalid - PROBLEM_LINES_MAX} more invalid events\n`);
  if (unreadable) {
    io.stderr.write(`jetlag import: ${unreadable.message}; ${events === 1 ? '1 event' : `${events} events`} before it written to ${outLabel}\n`);
    return 2;
  }
  if (!quiet) io.stderr.write(`jetlag import: wrote ${events} events (${towers} towers, ${invalid} invalid) to ${outLabel}\n`);
  return 0;
};
