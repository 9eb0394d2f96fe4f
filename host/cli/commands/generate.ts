// jetlag generate: a file of invented demo events from the toy generator (generator/generate.ts).

import { parseArgs, type CommandIo, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import { FORCE_OPTION, GRID_OPTIONS, gridFrom } from '../common-options.js';
import { writeGeneratedEvents } from '../../generator/generate-file.js';
import { producerName } from '../../version.js';

/** largest --pileup and --hard-jets accepted (see main) */
export const MAX_PILEUP = 100_000;
export const MAX_HARD_JETS = 10_000;

export const spec: CommandSpec = {
  name: 'generate',
  summary: 'Write a file of invented demo events: a few hard jets, Poisson pileup and tower noise (toy generator, not physics data).',
  usage: 'jetlag generate --events N --pileup MU --seed S --out FILE [options]',
  positionals: { min: 0, max: 0 },
  options: [
    { name: 'events', kind: 'integer', argument: '<N>', description: 'number of events (default: 1000)' },
    { name: 'pileup', kind: 'number', argument: '<MU>', description: 'mean number of soft pileup interactions per event (default: 200)' },
    { name: 'seed', kind: 'integer', argument: '<S>', description: 'random seed; the same seed gives the same file (default: 1)' },
    { name: 'hard-jets', kind: 'integer', argument: '<M>', description: 'hard jets per event drawn from 1..M (default: 4)' },
    { name: 'out', kind: 'string', argument: '<file>', description: 'output event file, - for stdout (required)' },
    { name: 'raw', kind: 'flag', description: 'write raw deposits (eta, phi, et) instead of binned towers' },
    { name: 'gzip', kind: 'flag', description: 'gzip-compress the output' },
    { name: 'label', kind: 'string', argument: '<text>', description: 'free-text label in the file header (default: a description of the settings)' },
    FORCE_OPTION,
    { name: 'quiet', kind: 'flag', short: 'q', description: 'no summary line on stderr' },
    ...GRID_OPTIONS,
  ],
};

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const args = parseArgs(spec, argv);
  const out = args.values.out as string | undefined;
  if (!out) throw new UsageError('generate: --out <file> is required (- for stdout)');
  const events = (args.values.events as number | undefined) ?? 1000;
  const pileup = (args.values.pileup as number | undefined) ?? 200;
  const seed = (args.values.seed as number | undefined) ?? 1;
  const maxHardJets = (args.values['hard-jets'] as number | undefined) ?? 4;
  if (events < 0) throw new UsageError(`generate: --events must be >= 0, got ${events}`);
  // an event is held whole while it is made, and a raw event of mean pileup MU is about
  // 120 * MU bytes: above these limits a record outgrows the readers' default cap (64 MiB)
  // or the generator its memory, so they are refused up front
  if (!(pileup >= 0 && pileup <= MAX_PILEUP)) throw new UsageError(`generate: --pileup must be in 0..${MAX_PILEUP}, got ${pileup}`);
  if (seed < 0 || seed > 0xffffffff) throw new UsageError(`generate: --seed must be in 0..4294967295, got ${seed}`);
  if (maxHardJets < 1 || maxHardJets > MAX_HARD_JETS) throw new UsageError(`generate: --hard-jets must be in 1..${MAX_HARD_JETS}, got ${maxHardJets}`);
  const grid = gridFrom(args, 'generate');
  const raw = Boolean(args.values.raw);
  const label = (args.values.label as string | undefined) ??
    `invented demo events (Halden ring toy): pileup ${pileup}, seed ${seed}, ${events} events${raw ? ', raw deposits' : ''}`;
  await writeGeneratedEvents(out, grid, { events, pileup, seed, maxHardJets, raw }, { producer: producerName('generate'), label }, { gzip: Boolean(args.values.gzip), force: args.values.force === true });
  if (out !== '-' && args.values.quiet !== true) io.stderr.write(`jetlag generate: wrote ${events} events to ${out}\n`);
  return 0;
}
