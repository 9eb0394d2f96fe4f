// jetlag report SUMMARY.json... --out report.html: one self-contained HTML report from saved run
// summaries (of one run, of merged shards, or several runs side by side) and compare documents.
// The building is in report/build-report.ts.

import { readFile } from 'node:fs/promises';
import { parseArgs, type CommandIo, type CommandMain, type CommandSpec } from '../args.js';
import { DISPLAY_OPTION, displayFrom, writeReport } from '../report-outputs.js';
import { InputError, UsageError } from '../../errors.js';
import { FORCE_OPTION } from '../common-options.js';
import { viewOfDocument, type ReportInput, type RunView } from '../../report/report-data.js';
import { readPerEventSample } from '../../report/per-event-points.js';

export const spec: CommandSpec = {
  name: 'report',
  summary: 'Write one self-contained HTML report (charts, tables, an event display) from JSON summaries of runs (jetlag run --json, jetlag merge --json) and compares (jetlag compare --json); several runs are shown side by side.',
  usage: 'jetlag report <summary.json>... --out <report.html> [options]',
  positionals: { min: 1, max: Number.MAX_SAFE_INTEGER },
  options: [
    { name: 'out', kind: 'string', argument: '<file>', description: 'the HTML file to write; - for stdout (required)' },
    DISPLAY_OPTION,
    { name: 'per-event', kind: 'string', argument: '<file.csv>', description: 'per-event times of the first run (jetlag run --per-event) for the scatter of service time against towers (default: the summary\'s bins only)' },
    FORCE_OPTION,
  ],
};

async function readDocument(path: string): Promise<ReportInput> {
  const text = await readFile(path, 'utf8');
  let document: unknown;
  try {
    document = JSON.parse(text);
  } catch (error) {
    throw new InputError(path, `not JSON: ${(error as Error).message}`);
  }
  return viewOfDocument(document, path);
}

export const main: CommandMain = async (argv: string[], io: CommandIo) => {
  const args = parseArgs(spec, argv);
  const out = args.values.out as string | undefined;
  if (out === undefined) throw new UsageError('report: --out <report.html> is required');
  const chosen = displayFrom(args, 'report');
  const inputs: ReportInput[] = [];
  for (const path of args.positionals) inputs.push(await readDocument(path));
  const perEvent = args.values['per-event'] as string | undefined;
  if (perEvent !== undefined) {
    const first = inputs.findIndex((input) => input.kind === 'run');
    if (first < 0) throw new UsageError('report: --per-event needs a run summary among the inputs');
    const sample = await readPerEventSample(perEvent);
    const run = inputs[first] as RunView;
    inputs[first] = { ...run, points: sample.points(), slowestEvent: run.slowestEvent ?? (sample.slowestEvent >= 0 ? sample.slowestEvent : null) };
  }
  await writeReport(out, inputs, chosen, 'report', io, args.values.force === true);
  return 0;
};
