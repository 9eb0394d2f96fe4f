// jetlag cluster: every event of a file through one clusterer, in this thread, jets out as a
// jets file (default) or JSON lines. The streamed, timed run over a worker pool is `jetlag run`;
// this command is the plain way to get jets, to reproduce one event, or to make a candidate
// file with a precision emulation for `jetlag compare`.
//
// Invalid events are reported on stderr (file, event, byte offset), written to the output as
// error records so no event number is lost, and counted; the command goes on. Exit 2 when the
// input becomes unreadable (everything before the problem is written and kept).

import { parseArgs, type CommandIo, type CommandSpec } from '../args.js';
import { InputError, UsageError } from '../../errors.js';
import { makeClusterer, parseEngineName } from '../../clustering/clusterers.js';
import { CLUSTER_OPTIONS, GRID_OPTIONS, clusterSettingsFrom, describeSettings, gridFrom, hasGridOptions } from '../common-options.js';
import { emulationName, parseEmulation } from '../../clustering/emulate.js';
import { openEventSource } from '../../input/event-source.js';
import { EventTowerReader } from '../../input/event-towers.js';
import { sameGrid } from '../../clustering/grid.js';
import { emptyJetSet } from '../../formats/jets-codec.js';
import { JetsFileWriter } from '../../output/jets-writer.js';
import { formatErrorLine, formatJetsLine } from '../../formats/jets-jsonl.js';
import { DEFAULT_MAX_RECORD_BYTES } from '../../input/record-reader.js';
import { TextFileWriter } from '../../output/record-writer.js';
import { producerName } from '../../version.js';

export const spec: CommandSpec = {
  name: 'cluster',
  summary: 'Cluster every event of an event file (or CSV tower file) and write the jets.',
  usage: 'jetlag cluster <events> [--engine wasm|reference] [--format jets|jsonl] [--out FILE] [options]',
  positionals: { min: 1, max: 1 },
  options: [
    { name: 'engine', kind: 'string', argument: '<name>', description: 'wasm (the engine) or reference (the plain TypeScript reference) (default: wasm)' },
    { name: 'emulate', kind: 'string', argument: '<f32|fixed:LSB>', description: 'cluster with single precision (f32) or tower energies quantised to LSB GeV (fixed:0.25) instead' },
    { name: 'format', kind: 'string', argument: '<jets|jsonl>', description: 'a jets file, or one JSON line per event (default: jets)' },
    { name: 'out', kind: 'string', argument: '<file>', description: 'output file, - for stdout (default: -)' },
    { name: 'no-towers', kind: 'flag', description: 'leave out the constituent tower indices' },
    { name: 'gzip', kind: 'flag', description: 'gzip-compress a jets file' },
    { name: 'label', kind: 'string', argument: '<text>', description: 'free-text label in the jets file header' },
    { name: 'max-record-bytes', kind: 'integer', argument: '<n>', description: `largest record accepted (default: ${DEFAULT_MAX_RECORD_BYTES})` },
    { name: 'quiet', kind: 'flag', short: 'q', description: 'no summary line on stderr' },
    ...CLUSTER_OPTIONS,
    ...GRID_OPTIONS,
  ],
};

/** problem lines shown on stderr before the rest are only counted */
const PROBLEM_LINES_MAX = 20;

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const args = parseArgs(spec, argv);
  const input = args.positionals[0];
  const format = (args.values.format as string | undefined) ?? 'jets';
  if (format !== 'jets' && format !== 'jsonl') throw new UsageError(`cluster: --format must be jets or jsonl, got ${JSON.stringify(format)}`);
  const engine = parseEngineName((args.values.engine as string | undefined) ?? 'wasm', 'cluster');
  const emulation = args.values.emulate !== undefined ? parseEmulation(args.values.emulate as string) : null;
  const settings = clusterSettingsFrom(args, 'cluster');
  const withTowers = !args.values['no-towers'];
  const out = (args.values.out as string | undefined) ?? '-';
  const quiet = Boolean(args.values.quiet);

  const source = await openEventSource(input, {
    grid: hasGridOptions(args) ? gridFrom(args, 'cluster') : undefined,
    maxRecordBytes: args.values['max-record-bytes'] as number | undefined,
  });
  if (source.format === 'events-file' && hasGridOptions(args) && !sameGrid(gridFrom(args, 'cluster'), source.header.grid)) {
    throw new UsageError(`cluster: ${source.label} carries its own grid; the grid options apply to CSV tower files only`);
  }
  const grid = source.header.grid;
  const clusterer = makeClusterer(engine, grid, settings, emulation);
  if ('withTowers' in clusterer) (clusterer as { withTowers: boolean }).withTowers = withTowers;
  const engineName = emulation ? emulationName(emulation) : clusterer.name;
  const reader = new EventTowerReader(grid);

  const jetsFile = format === 'jets'
    ? await JetsFileWriter.open(out, grid, { ...settings, engine: engineName },
      { producer: producerName('cluster'), label: (args.values.label as string | undefined) ?? `jets of ${source.label}` },
      { gzip: Boolean(args.values.gzip), stdout: io.stdout })
    : null;
  const lines = format === 'jsonl' ? await TextFileWriter.open(out, { stdout: io.stdout }) : null;

  let events = 0;
  let invalid = 0;
  let outsideAcceptance = 0; // raw deposits outside the grid's eta range: reported, not an error (spec section 1)
  let shownProblems = 0;
  let unreadable: InputError | null = null;
  try {
    try {
      for await (const record of source.records) {
        events++;
        const towers = reader.read(record.bytes);
        if (!towers.ok) {
          invalid++;
          const where = towers.event !== undefined ? `event ${towers.event}` : `record ${events - 1}`;
          if (shownProblems++ < PROBLEM_LINES_MAX) io.stderr.write(`jetlag cluster: ${source.label}, ${where}, byte ${record.offset}: ${towers.problem}\n`);
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
  if (shownProblems > PROBLEM_LINES_MAX) io.stderr.write(`jetlag cluster: ... and ${shownProblems - PROBLEM_LINES_MAX} more invalid events\n`);
  if (unreadable) {
    io.stderr.write(`jetlag: ${unreadable.message}; the ${events} events before it were clustered and written\n`);
    return 2;
  }
  if (!quiet) {
    const outside = outsideAcceptance > 0 ? `; ${outsideAcceptance} raw deposit${outsideAcceptance === 1 ? '' : 's'} outside the eta acceptance` : '';
    io.stderr.write(`jetlag cluster: ${events} events (${events - invalid} clustered, ${invalid} invalid) with ${engineName}, ${describeSettings(settings)}${outside}\n`);
  }
  return 0;
}
