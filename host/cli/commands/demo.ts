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
import { EventFileWriter } from '../../output/record-writer.js';
import { generateEvents } from '../../generator/generate.js';
import { MAX_PILEUP } from './generate.js';
import { formatReport } from '../../measure/report.js';
import { runEvents } from '../../pipeline/run.js';
import { producerName } from '../../version.js';

export const spec: CommandSpec = {
  name: 'demo',
  summary: 'Generate invented demo events and run the main job on them: the streamed, checked, timed run.',
  usage: 'jetlag demo [--events N] [--pileup MU] [--workers N] [--budget-us B] [--keep DIR]',
  positionals: { min: 0, max: 0 },
  options: [
    { name: 'events', kind: 'integer', argument: '<N>', description: 'demo events to generate (default: 2000)' },
    { name: 'pileup', kind: 'number', argument: '<MU>', description: 'mean pileup interactions per event (default: 200)' },
    { name: 'workers', kind: 'integer', argument: '<N>', description: 'worker threads (default: number of cores)' },
    { name: 'budget-us', kind: 'number', argument: '<B>', description: 'per-event latency budget in µs for the budget-miss count (default: 1000)' },
    { name: 'check', kind: 'number', argument: '<fraction>', description: 'fraction of events checked bit for bit against the reference (default: 0.02)' },
    { name: 'keep', kind: 'string', argument: '<dir>', description: 'write the demo event file into this directory and keep it (default: a temporary directory, removed)' },
  ],
};

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const args = parseArgs(spec, argv);
  const events = (args.values.events as number | undefined) ?? 2000;
  const pileup = (args.values.pileup as number | undefined) ?? 200;
  const budgetUs = (args.values['budget-us'] as number | undefined) ?? 1000;
  const fraction = (args.values.check as number | undefined) ?? 0.02;
  if (events < 1) throw new UsageError(`demo: --events must be >= 1, got ${events}`);
  if (!(pileup >= 0 && pileup <= MAX_PILEUP)) throw new UsageError(`demo: --pileup must be in 0..${MAX_PILEUP}, got ${pileup}`);
  if (!(fraction >= 0 && fraction <= 1)) throw new UsageError(`demo: --check must be a fraction in [0, 1], got ${fraction}`);
  const keep = args.values.keep as string | undefined;
  const directory = keep ?? mkdtempSync(join(tmpdir(), 'jetlag-demo-'));
  const file = join(directory, 'halden-demo.jetlag');
  try {
    io.stdout.write(`jetlag demo: ${events} invented events (toy generator, fictional Halden ring scenario), pileup ${pileup}\n`);
    const writer = await EventFileWriter.open(file, {
      grid: DEFAULT_GRID,
      producer: producerName('demo'),
      label: `invented demo events (Halden ring toy): pileup ${pileup}, seed 1, ${events} events`,
    });
    for (const event of generateEvents(DEFAULT_GRID, { events, pileup, seed: 1 })) {
      const pending = writer.writeEvent({ event: event.event, towerIndex: event.towerIndex, towerEt: event.towerEt });
      if (pending) await pending;
    }
    await writer.close();
    io.stdout.write(`jetlag demo: wrote ${file}; streaming it through the worker pool (anti-kt R=0.4, ${fraction * 100}% of events checked against the reference)\n\n`);
    const summary = await runEvents({
      input: file,
      workers: args.values.workers as number | undefined,
      budgetUs,
      settings: { ...DEFAULT_SETTINGS },
      check: { mode: 'fraction', fraction, seed: 1 },
      progress: io.isTty ? io.stderr : null,
      onProblem: (line) => io.stderr.write(`jetlag: ${line}\n`),
    });
    io.stdout.write(formatReport(summary));
    return summary.check.disagreeing > 0 || summary.events.failed > 0 ? 1 : 0;
  } finally {
    if (!keep) rmSync(directory, { recursive: true, force: true });
  }
}
