// The HTML report and the per-event CSV as extra outputs of `jetlag run` (--report, --per-event,
// --display) and `jetlag compare` (--report, --display); `jetlag report` builds the same page
// from saved summaries (commands/report.ts, report/build-report.ts).

import type { CommandIo, OptionSpec, ParsedArgs } from './args.js';
import { UsageError } from '../errors.js';
import { EventSample } from '../measure/event-sample.js';
import { PerEventWriter } from '../output/per-event-writer.js';
import { writeTextFile } from '../output/output-file.js';
import { checkOutputAllowed } from '../output/output-target.js';
import { buildReport, findDisplay } from '../report/build-report.js';
import { compareView, runView, type ReportInput } from '../report/report-data.js';
import type { EventObserver } from '../pipeline/run-delivery.js';
import type { RunSummary } from '../measure/summary.js';

export const REPORT_OPTION: OptionSpec = {
  name: 'report', kind: 'string', argument: '<file.html>', description: 'also write a self-contained HTML report (charts, tables, an event display) here (default: none)',
};

export const DISPLAY_OPTION: OptionSpec = {
  name: 'display', kind: 'integer', argument: '<event>',
  description: 'the event drawn in the report\'s event display (default: the slowest event of a run, the worst of a compare)',
};

export const PER_EVENT_OPTION: OptionSpec = {
  name: 'per-event', kind: 'string', argument: '<file.csv>',
  description: 'write one CSV row per clustered event: event,towers,service_ns, and in an open loop scheduled_ns,start_ns,done_ns (ns since the first arrival) (default: none)',
};

export function displayFrom(args: ParsedArgs, command: string): number | null {
  const event = args.values.display as number | undefined;
  if (event === undefined) return null;
  if (!(Number.isInteger(event) && event >= 0)) throw new UsageError(`${command}: --display must be an event number >= 0, got ${event}`);
  return event;
}

/** Builds the page and writes it; notes (no event display, and why) go to stderr. */
export async function writeReport(path: string, inputs: ReportInput[], chosen: number | null, command: string, io: CommandIo, force: boolean): Promise<void> {
  const notes: string[] = [];
  const display = await findDisplay(inputs, chosen, (line) => notes.push(line));
  if (display === null && notes.length === 0) notes.push('no event display: no event to show (give --display EVENT)');
  for (const line of notes) io.stderr.write(`jetlag ${command}: ${line}\n`);
  const html = await buildReport({ inputs, display, notes });
  if (path === '-') io.stdout.write(html);
  else await writeTextFile(path, html, { force });
}

/** A run's --report and --per-event: opened before the run (a refused output costs no run), fed event by event. */
export class RunReportOutputs {
  readonly onEvent: EventObserver | undefined;

  private constructor(
    private readonly reportPath: string | null,
    private readonly chosen: number | null,
    private readonly sample: EventSample | null,
    private readonly perEvent: PerEventWriter | null,
    private readonly force: boolean,
  ) {
    if (sample === null && perEvent === null) return;
    this.onEvent = (event, towers, serviceNs, scheduledNs, startNs, doneNs) => {
      sample?.add(event, towers, serviceNs);
      perEvent?.add(event, towers, serviceNs, scheduledNs, startNs, doneNs);
    };
  }

  static async open(args: ParsedArgs, openLoop: boolean, force: boolean): Promise<RunReportOutputs> {
    const reportPath = (args.values.report as string | undefined) ?? null;
    const perEventPath = (args.values['per-event'] as string | undefined) ?? null;
    const chosen = displayFrom(args, 'run');
    if (reportPath !== null && reportPath !== '-') await checkOutputAllowed(reportPath, { force });
    const perEvent = perEventPath !== null ? await PerEventWriter.open(perEventPath, openLoop, { force }) : null;
    return new RunReportOutputs(reportPath, chosen, reportPath !== null ? new EventSample() : null, perEvent, force);
  }

  /** After the run: the per-event file put in place, the report written. */
  async finish(summary: RunSummary, io: CommandIo): Promise<void> {
    await this.perEvent?.close();
    if (this.reportPath === null || this.sample === null) return;
    const sample = this.sample;
    const view = runView(summary, 'this run', { points: sample.points(), slowestEvent: sample.slowestEvent >= 0 ? sample.slowestEvent : null });
    await writeReport(this.reportPath, [view], this.chosen, 'run', io, this.force);
  }

  async abort(): Promise<void> {
    await this.perEvent?.abort();
  }
}

/** A compare's --report, from the document its --json writes. */
export async function writeCompareReport(args: ParsedArgs, document: object, io: CommandIo): Promise<void> {
  const path = args.values.report as string | undefined;
  if (path === undefined) return;
  await writeReport(path, [compareView(document, 'this compare')], displayFrom(args, 'compare'), 'compare', io, args.values.force === true);
}
