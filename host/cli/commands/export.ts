// jetlag export FILE: an event file, a CSV tower file or a jets file as CSV or JSON lines.
//
// events, CSV   event,ieta,iphi,et, one row per tower in record order (what import reads
//               back); raw deposits are binned onto the header's grid first. CSV has no
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
//               constituents: use jsonl.
// jets, jsonl   the line form of `jetlag cluster --format jsonl` (jets-jsonl.ts)
// Numbers are written with String(x), so every double reads back identical.
// Exit 2 when the file is unreadable (after writing everything before the problem) or a
// jets record cannot be decoded (it is reported and skipped).

import { parseArgs, type CommandIo, type CommandMain, type CommandSpec } from '../args.js';
import { InputError, UsageError } from '../../errors.js';
import { GRID_OPTIONS, gridFrom, hasGridOptions } from '../common-options.js';
import { openRecordFile, type RecordSource } from '../../input/event-source.js';
import { EventTowerReader } from '../../input/event-towers.js';
import { decodeJetsRecord } from '../../formats/jets-codec.js';
import { formatErrorLine, formatJetsLine, jsonNumber } from '../../formats/jets-jsonl.js';
import { DEFAULT_MAX_RECORD_BYTES } from '../../input/record-reader.js';
import { TextFileWriter } from '../../output/record-writer.js';
import type { JetSet } from '../../types.js';

export const spec: CommandSpec = {
  name: 'export',
  summary: 'Write an event file, a CSV tower file or a jets file as CSV or JSON lines.',
  usage: 'jetlag export <file> [--format csv|jsonl] [--out <file>] [options]',
  positionals: { min: 1, max: 1 },
  options: [
    { name: 'format', kind: 'string', argument: '<csv|jsonl>', description: 'output form (default: csv)' },
    { name: 'out', kind: 'string', argument: '<file>', description: 'where to write; - for stdout (default: -)' },
    ...GRID_OPTIONS.map((o) => ({ ...o, description: o.description.replace(' (default:', ', for CSV input (default:') })),
    { name: 'max-record-bytes', kind: 'integer', argument: '<n>', description: `largest record accepted (default: ${DEFAULT_MAX_RECORD_BYTES})` },
    { name: 'quiet', kind: 'flag', short: 'q', description: 'do not print the per-event problems and the summary line' },
  ],
};

const PROBLEM_LINES_MAX = 20;

/** the jets CSV columns: the CSV form `jetlag compare` reads (candidate-reader.ts) */
export const JETS_CSV_HEADER = 'event,pt,y,phi,m';

interface Tally {
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

/** CSV only: true when the rows of `event` can follow those written so far; else counts and reports it. */
function csvOrderAllows(event: number, tally: Tally, problems: ProblemLines, where: string): boolean {
  if (event > tally.lastCsvEvent) {
    tally.lastCsvEvent = event;
    return true;
  }
  tally.outOfOrder++;
  problems.add(`${where}: event ${event} after event ${tally.lastCsvEvent} cannot follow it in CSV, whose event numbers must increase (left out)`);
  return false;
}

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

async function exportEvents(source: RecordSource, format: string, out: TextFileWriter, tally: Tally, problems: ProblemLines): Promise<void> {
  const reader = new EventTowerReader(source.header.grid);
  const phiBins = source.header.grid.phiBins;
  if (format === 'csv') await out.write('event,ieta,iphi,et\n');
  for await (const record of source.records) {
    tally.events++;
    const result = reader.read(record.bytes);
    if (!result.ok) {
      tally.invalid++;
      const where = result.event === undefined ? `record ${tally.events - 1}` : `event ${result.event}`;
      if (format === 'csv') {
        problems.add(`${source.label}, ${where}, byte ${record.offset}: ${result.problem} (invalid event, no CSV rows written)`);
      } else {
        problems.add(`${source.label}, ${where}, byte ${record.offset}: ${result.problem} (invalid event, written as an error line)`);
        if (result.event !== undefined) await out.write(formatErrorLine(result.event, result.problem) + '\n');
      }
      continue;
    }
    const { event, towerIndex, towerEt } = result;
    tally.outsideAcceptance += result.outsideAcceptance;
    if (format === 'csv' && towerIndex.length > 0 && !csvOrderAllows(event, tally, problems, `${source.label}, event ${event}, byte ${record.offset}`)) continue;
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

function jetCsvRows(event: number, jets: JetSet): string {
  let text = '';
  for (let k = 0; k < jets.count; k++) {
    text += `${event},${jsonNumber(jets.pt[k])},${jsonNumber(jets.rapidity[k])},${jsonNumber(jets.phi[k])},${jsonNumber(jets.mass[k])}\n`;
  }
  return text;
}

async function exportJets(source: RecordSource, format: string, out: TextFileWriter, tally: Tally, problems: ProblemLines): Promise<void> {
  if (format === 'csv') await out.write(`${JETS_CSV_HEADER}\n`);
  let record = -1;
  for await (const raw of source.records) {
    record++;
    tally.events++;
    let decoded;
    try {
      decoded = decodeJetsRecord(raw.bytes);
    } catch (error) {
      tally.broken++;
      problems.add(`${source.label}, record ${record}, byte ${raw.offset}: bad jets record: ${(error as Error).message}`);
      continue;
    }
    if (decoded.problem !== '') {
      tally.broken++;
      problems.add(`${source.label}, event ${decoded.event}, byte ${raw.offset}: bad jets record: ${decoded.problem}`);
      continue;
    }
    if (decoded.error !== '') {
      tally.invalid++;
      if (format === 'csv') {
        problems.add(`${source.label}, event ${decoded.event}, byte ${raw.offset}: ${decoded.error} (invalid event, no CSV rows written)`);
      } else {
        await out.write(formatErrorLine(decoded.event, decoded.error) + '\n');
      }
      continue;
    }
    if (format === 'csv' && decoded.jets.count > 0 && !csvOrderAllows(decoded.event, tally, problems, `${source.label}, event ${decoded.event}, byte ${raw.offset}`)) continue;
    tally.rows += decoded.jets.count;
    await out.write(format === 'csv'
      ? jetCsvRows(decoded.event, decoded.jets)
      : formatJetsLine(decoded.event, decoded.jets, decoded.hasTowers) + '\n');
  }
}

export const main: CommandMain = async (argv: string[], io: CommandIo) => {
  const args = parseArgs(spec, argv);
  const format = (args.values.format as string | undefined) ?? 'csv';
  if (format !== 'csv' && format !== 'jsonl') throw new UsageError(`export: --format must be csv or jsonl, got ${JSON.stringify(format)}`);
  const input = args.positionals[0];
  const outPath = (args.values.out as string | undefined) ?? '-';
  const quiet = args.values.quiet === true;
  const grid = hasGridOptions(args) ? gridFrom(args, 'export') : undefined;
  const maxRecordBytes = args.values['max-record-bytes'] as number | undefined;
  if (maxRecordBytes !== undefined && maxRecordBytes < 1) throw new UsageError(`export: --max-record-bytes must be at least 1, got ${maxRecordBytes}`);

  const source = await openRecordFile(input === '-' ? io.stdin : input, { grid, maxRecordBytes, fileLabel: input === '-' ? '<stdin>' : input });
  const out = await TextFileWriter.open(outPath, { stdout: io.stdout });
  const tally: Tally = { events: 0, rows: 0, invalid: 0, broken: 0, outOfOrder: 0, lastCsvEvent: -1, outsideAcceptance: 0 };
  const problems = new ProblemLines(io, quiet);
  let unreadable: InputError | null = null;
  try {
    if (source.format === 'jets-file') await exportJets(source, format, out, tally, problems);
    else await exportEvents(source, format, out, tally, problems);
  } catch (error) {
    if (!(error instanceof InputError)) {
      await out.abort();
      throw error;
    }
    unreadable = error;
  }
  await out.close();
  problems.finish();
  const what = source.format === 'jets-file' ? 'jets' : 'towers';
  const outLabel = outPath === '-' ? '<stdout>' : outPath;
  if (unreadable) {
    const records = tally.events === 1 ? '1 record' : `${tally.events} records`;
    io.stderr.write(`jetlag export: ${unreadable.message}; ${records} before it written to ${outLabel}\n`);
    return 2;
  }
  if (!quiet) {
    io.stderr.write(`jetlag export: read ${tally.events} events (${tally.invalid} invalid` +
      `${tally.broken > 0 ? `, ${tally.broken} unreadable records` : ''}` +
      `${tally.outOfOrder > 0 ? `, ${tally.outOfOrder} out of order left out` : ''}` +
      `${tally.outsideAcceptance > 0 ? `, ${tally.outsideAcceptance} raw deposits outside the eta acceptance` : ''}), wrote ${tally.rows} ${what} to ${outLabel}\n`);
  }
  return tally.broken > 0 ? 2 : 0;
};
