// jetlag export FILE: an event file, a CSV tower file or a jets file as CSV or JSON lines.
//
// events, CSV   event,ieta,iphi,et, one row per tower in record order (what import reads
//               back); raw deposits are binned onto the header's grid first. A grid other
//               than the default is stated in a `# grid ...` line before the header, which
//               every CSV reader of jetlag takes back (input/csv-grid.ts). CSV has no
//               place for an invalid event or for empty events after the last tower: invalid
//               events are reported on stderr and left out. CSV rows of an event come
//               together and event numbers never decrease (spec section 1), so an event
//               with rows whose number is not above the last one written (a file out of
//               order, or with an event twice) is reported and left out too: the CSV stays
//               readable and means what the file meant.
// events, jsonl {"event":n,"towers":[[ieta,iphi,et],...]} or {"event":n,"error":"..."}
// jets, CSV     event,pt,y,phi,m: one row per jet, the CSV form `jetlag compare` reads as a
//               candidate; CSV has no place for an invalid event (reported on stderr, left
//               out); an event out of order is left out as for events. Four-vectors and
//               constituents: use jsonl. Jets made with trimming or soft drop add their
//               groomed columns after these (output/groomed-csv.ts). Every row ends with
//               its event's cluster_time_ns and towers (towers that entered clustering; an
//               empty cell when the file does not record it); an event without jets has
//               no row, so for every event's time use events-csv or jsonl.
// jets, events-csv  event,jets,cluster_time_ns,towers: one row per valid event, those
//               without jets too (for plotting time against towers); invalid events are
//               reported on stderr and left out
// jets, jsonl   the line form of `jetlag cluster --format jsonl` (jets-jsonl.ts), with
//               "cluster_time_ns" and "towers" (null when not recorded) after "event"
// Numbers are written with String(x), so every double reads back identical.
// Exit 2 when the file is unreadable (after writing everything before the problem) or a
// jets record cannot be decoded (it is reported and skipped). How: output/text-export.ts.

import { parseArgs, type CommandIo, type CommandMain, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import { FORCE_OPTION, GRID_OPTIONS, INFLATE_OPTIONS, MAX_EVENT_GAP_OPTION, gridFrom, hasGridOptions, inflateLimitsFrom, maxEventGapFrom } from '../common-options.js';
import { DEFAULT_MAX_RECORD_BYTES } from '../../input/record-framer.js';
import { exportAsText } from '../../output/text-export.js';
import { RecordProgress } from '../../measure/input-progress.js';

export const spec: CommandSpec = {
  name: 'export',
  summary: 'Write an event file, a CSV tower file or a jets file as CSV or JSON lines.',
  usage: 'jetlag export <file> [--format csv|jsonl|events-csv] [--out <file>] [options]',
  positionals: { min: 1, max: 1 },
  options: [
    { name: 'format', kind: 'string', argument: '<csv|jsonl|events-csv>', description: 'output form (default: csv); events-csv: one row per event of a jets file (event, jets, cluster_time_ns, towers)' },
    { name: 'out', kind: 'string', argument: '<file>', description: 'where to write; - for stdout (default: -)' },
    ...GRID_OPTIONS.map((o) => ({ ...o, description: o.description.replace(' (default:', ', for CSV input (default:') })),
    MAX_EVENT_GAP_OPTION,
    ...INFLATE_OPTIONS,
    { name: 'max-record-bytes', kind: 'integer', argument: '<n>', description: `largest record accepted (default: ${DEFAULT_MAX_RECORD_BYTES})` },
    FORCE_OPTION,
    { name: 'quiet', kind: 'flag', short: 'q', description: 'do not print the progress bar, the per-event problems and the summary line (kept when records were unreadable: exit 2)' },
  ],
};

const PROBLEM_LINES_MAX = 20;

class ProblemLines {
  private shown = 0;
  private hidden = 0;
  constructor(private readonly io: CommandIo, private readonly quiet: boolean) {}
  add(line: string): void {
    if (this.quiet) return;
    if (this.shown < PROBLEM_LINES_MAX) { this.shown++; this.io.stderr.write(`jetlag export: ${line}\n`); } else this.hidden++;
  }
  finish(): void {
    if (!this.quiet && this.hidden > 0) this.io.stderr.write(`jetlag export: ... and ${this.hidden} more\n`);
  }
}

export const main: CommandMain = async (argv: string[], io: CommandIo) => {
  const args = parseArgs(spec, argv);
  const format = (args.values.format as string | undefined) ?? 'csv';
  if (format !== 'csv' && format !== 'jsonl' && format !== 'events-csv') throw new UsageError(`export: --format must be csv, jsonl or events-csv, got ${JSON.stringify(format)}`);
  const input = args.positionals[0];
  const outPath = (args.values.out as string | undefined) ?? '-';
  const quiet = args.values.quiet === true;
  const grid = hasGridOptions(args) ? gridFrom(args, 'export') : undefined;
  const maxRecordBytes = args.values['max-record-bytes'] as number | undefined;
  if (maxRecordBytes !== undefined && maxRecordBytes < 1) throw new UsageError(`export: --max-record-bytes must be at least 1, got ${maxRecordBytes}`);

  const problems = new ProblemLines(io, quiet);
  const progress = new RecordProgress(io.stderr, input, io.isTty && !quiet);
  progress.start();
  const { tally, rowsAre, unreadable } = await exportAsText({
    input: input === '-' ? io.stdin : input,
    fileLabel: input === '-' ? '<stdin>' : input,
    grid,
    maxRecordBytes,
    maxEventGap: maxEventGapFrom(args, 'export'),
    inflate: inflateLimitsFrom(args, 'export'),
    force: args.values.force === true,
    format,
    out: outPath,
    stdout: io.stdout,
    onProblem: (line) => problems.add(line),
    onRecord: progress.onRecord,
  }).finally(() => progress.stop());
  problems.finish();
  const outLabel = outPath === '-' ? '<stdout>' : outPath;
  if (unreadable) {
    const records = tally.events === 1 ? '1 record' : `${tally.events} records`;
    io.stderr.write(`jetlag export: ${unreadable.message}; ${records} before it written to ${outLabel}\n`);
    return 2;
  }
  // exit 2 says why even under --quiet
  if (!quiet || tally.broken > 0) {
    io.stderr.write(`jetlag export: read ${tally.events} events (${tally.invalid} invalid` +
      `${tally.broken > 0 ? `, ${tally.broken} unreadable records` : ''}` +
      `${tally.outOfOrder > 0 ? `, ${tally.outOfOrder} out of order left out` : ''}` +
      `${tally.outsideAcceptance > 0 ? `, ${tally.outsideAcceptance} raw deposits outside the eta acceptance` : ''}), wrote ${tally.rows} ${rowsAre} to ${outLabel}\n`);
  }
  return tally.broken > 0 ? 2 : 0;
};
