// jetlag demo: what `npm start` runs. Generates a file of invented demo events (the toy
// generator's fictional Halden ring scenario) and runs the main job on it: the streamed run
// over the worker pool on the engine, a sample checked bit for bit against the reference, and
// the latency report.

import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs, type CommandIo, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../../types.js';
import { writeGeneratedEvents } from '../../generator/generate-file.js';
import { MAX_PILEUP } from './generate.js';
import { FORCE_OPTION } from '../common-options.js';
import { parseCheck, positiveInteger, positiveNumber, runOption } from './run.js';
import { formatReport } from '../../measure/report.js';
import { runEvents } from '../../pipeline/run.js';
import type { CheckOption } from '../../pipeline/run-plan.js';
import { producerName } from '../../version.js';

/** the demo's own defaults of the options it shares with run: a budget to count against, a larger sample checked */
const DEMO_BUDGET_US = 1000;
const DEMO_CHECK: CheckOption = { mode: 'fraction', fraction: 0.02, seed: 1 };

export const spec: CommandSpec = {
  name: 'demo',
  summary: 'Generate invented demo events and run the main job on them: the streamed, checked, timed run.',
  usage: 'jetlag demo [--events N] [--pileup MU] [--workers N] [--budget-us B] [--keep DIR]',
  positionals: { min: 0, max: 0 },
  options: [
    { name: 'events', kind: 'integer', argument: '<N>', description: 'demo events to generate (default: 2000)' },
    { name: 'pileup', kind: 'number', argument: '<MU>', description: 'mean pileup interactions per event (default: 200)' },
    runOption('workers'),
    runOption('budget-us', String(DEMO_BUDGET_US)),
    runOption('check', String(DEMO_CHECK.fraction)),
    { name: 'keep', kind: 'string', argument: '<dir>', description: 'write the demo event file into this directory and keep it (default: a temporary directory, removed)' },
    FORCE_OPTION,
  ],
};

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const args = parseArgs(spec, argv);
  const events = (args.values.events as number | undefined) ?? 2000;
  const pileup = (args.values.pileup as number | undefined) ?? 200;
  if (events < 1) throw new UsageError(`demo: --events must be >= 1, got ${events}`);
  if (!(pileup >= 0 && pileup <= MAX_PILEUP)) throw new UsageError(`demo: --pileup must be in 0..${MAX_PILEUP}, got ${pileup}`);
  const checkText = args.values.check as string | undefined;
  const check = checkText === undefined ? DEMO_CHECK : parseCheck(checkText, DEMO_CHECK.seed, 'demo');
  const workers = positiveInteger(args, 'workers', 'demo');
  const budgetUs = positiveNumber(args, 'budget-us', 'demo') ?? DEMO_BUDGET_US;
  const keep = args.values.keep as string | undefined;
  const directory = keep ?? mkdtempSync(join(tmpdir(), 'jetlag-demo-'));
  const file = join(directory, 'halden-demo.jetlag');
  try {
    io.stdout.write(`jetlag demo: ${events} invented events (toy generator, fictional Halden ring scenario), pileup ${pileup}\n`);
    await writeGeneratedEvents(file, DEFAULT_GRID, { events, pileup, seed: 1 }, {
      producer: producerName('demo'),
      label: `invented demo events (Halden ring toy): pileup ${pileup}, seed 1, ${events} events`,
    }, { force: args.values.force === true });
    io.stdout.write(`jetlag demo: wrote ${file}; streaming it through the worker pool (anti-kt R=0.4, ${check.fraction * 100}% of events checked against the reference)\n\n`);
    const summary = await runEvents({
      input: file,
      workers,
      budgetUs,
      settings: { ...DEFAULT_SETTINGS },
      check,
      progress: io.isTty ? io.stderr : null,
      onProblem: (line) => io.stderr.write(`jetlag demo: ${line}\n`),
    });
    io.stdout.write(formatReport(summary));
    return summary.check.disagreeing > 0 || summary.events.failed > 0 ? 1 : 0;
  } finally {
    if (!keep) rmSync(directory, { recursive: true, force: true });
  }
}
