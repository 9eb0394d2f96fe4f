// jetlag generate: a file of invented demo events from the toy generator (generator/generate.ts).

import { parseArgs, type CommandIo, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import { FORCE_OPTION, GRID_OPTIONS, gridFrom } from '../common-options.js';
import { writeGeneratedEvents } from '../../generator/generate-file.js';
import { producerName } from '../../version.js';
import { ProgressBar } from '../../measure/progress.js';

/** largest --pileup and --hard-jets accepted (see main) */
export const MAX_PILEUP = 100_000;
export const MAX_HARD_JETS = 10_000;
/** largest --boosted accepted: more heavy objects than fit side by side on a grid make no sense */
export const MAX_BOOSTED = 100;

export const spec: CommandSpec = {
  name: 'generate',
  summary: 'Write a file of invented demo events: a few hard jets, Poisson pileup and tower noise (toy generator, not physics data).',
  usage: 'jetlag generate --events N --pileup MU --seed S --out FILE [options]',
  positionals: { min: 0, max: 0 },
  options: [
    { name: 'events', kind: 'integer', argument: '<N>', description: 'number of events (default: 1000)' },
    { name: 'pileup', kind: 'string', argument: '<MU|LOW:HIGH>', description: 'mean number of soft pileup interactions per event; LOW:HIGH draws each event\'s mean uniformly from that range, for spread in tower multiplicity (default: 200)' },
    { name: 'seed', kind: 'integer', argument: '<S>', description: 'random seed; the same seed gives the same file (default: 1)' },
    { name: 'hard-jets', kind: 'integer', argument: '<M>', description: 'hard jets per event drawn from 1..M (default: 4)' },
    { name: 'boosted', kind: 'integer', argument: '<N>', description: 'N boosted heavy objects per event: invented particles of mass 90 GeV (two prongs) or 170 GeV (three prongs) at pt 400-800 GeV, prongs a few towers apart, for grooming demos (toy, not physics) (default: 0)' },
    { name: 'out', kind: 'string', argument: '<file>', description: 'output event file, - for stdout (required)' },
    { name: 'raw', kind: 'flag', description: 'write raw deposits (eta, phi, et) instead of binned towers' },
    { name: 'gzip', kind: 'flag', description: 'gzip-compress the output' },
    { name: 'label', kind: 'string', argument: '<text>', description: 'free-text label in the file header (default: a description of the settings)' },
    FORCE_OPTION,
    { name: 'quiet', kind: 'flag', short: 'q', description: 'no progress bar and no summary line on stderr' },
    ...GRID_OPTIONS,
  ],
};

const NUMBER_TEXT = /^(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;

/** --pileup MU or LOW:HIGH, each a plain decimal in 0..MAX_PILEUP, LOW <= HIGH. */
export function parsePileup(text: string | undefined): { pileup: number; pileupMax?: number } {
  if (text === undefined) return { pileup: 200 };
  const parts = text.split(':');
  const values = parts.map((part) => (NUMBER_TEXT.test(part) ? Number(part) : NaN));
  if (parts.length === 1) {
    if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(text) || !Number.isFinite(Number(text))) {
      throw new UsageError(`generate: --pileup must be a number, got ${JSON.stringify(text)}`);
    }
    const pileup = Number(text);
    if (!(pileup >= 0 && pileup <= MAX_PILEUP)) throw new UsageError(`generate: --pileup must be in 0..${MAX_PILEUP}, got ${pileup}`);
    return { pileup };
  }
  const [low, high] = values;
  if (parts.length !== 2 || !(low >= 0 && low <= high && high <= MAX_PILEUP)) {
    throw new UsageError(`generate: --pileup LOW:HIGH needs 0 <= LOW <= HIGH <= ${MAX_PILEUP}, got ${JSON.stringify(text)}`);
  }
  return { pileup: low, pileupMax: high };
}

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const args = parseArgs(spec, argv);
  const out = args.values.out as string | undefined;
  if (!out) throw new UsageError('generate: --out <file> is required (- for stdout)');
  const events = (args.values.events as number | undefined) ?? 1000;
  const { pileup, pileupMax } = parsePileup(args.values.pileup as string | undefined);
  const seed = (args.values.seed as number | undefined) ?? 1;
  const maxHardJets = (args.values['hard-jets'] as number | undefined) ?? 4;
  const boosted = (args.values.boosted as number | undefined) ?? 0;
  if (boosted < 0 || boosted > MAX_BOOSTED) throw new UsageError(`generate: --boosted must be in 0..${MAX_BOOSTED}, got ${boosted}`);
  if (events < 0) throw new UsageError(`generate: --events must be >= 0, got ${events}`);
  // an event is held whole while it is made, and a raw event of mean pileup MU is about
  // 120 * MU bytes: above these limits a record outgrows the readers' default cap (64 MiB)
  // or the generator its memory, so they are refused up front
  if (seed < 0 || seed > 0xffffffff) throw new UsageError(`generate: --seed must be in 0..4294967295, got ${seed}`);
  if (maxHardJets < 1 || maxHardJets > MAX_HARD_JETS) throw new UsageError(`generate: --hard-jets must be in 1..${MAX_HARD_JETS}, got ${maxHardJets}`);
  const grid = gridFrom(args, 'generate');
  const raw = Boolean(args.values.raw);
  const label = (args.values.label as string | undefined) ??
    `invented demo events (Halden ring toy): pileup ${pileupMax === undefined ? pileup : `${pileup}..${pileupMax} (uniform per event)`}, seed ${seed}, ${events} events${boosted > 0 ? `, ${boosted} invented boosted two- or three-prong objects per event` : ''}${raw ? ', raw deposits' : ''}`;
  let written = 0;
  const progress = new ProgressBar(io.stderr, { eventsDone: () => written }, { events }, io.isTty && args.values.quiet !== true);
  progress.start();
  try {
    await writeGeneratedEvents(
      out, grid, { events, pileup, pileupMax, seed, maxHardJets, raw, boosted }, { producer: producerName('generate'), label },
      { gzip: Boolean(args.values.gzip), force: args.values.force === true }, (count) => { written = count; },
    );
  } finally {
    progress.stop();
  }
  if (out !== '-' && args.values.quiet !== true) io.stderr.write(`jetlag generate: wrote ${events} events to ${out}\n`);
  return 0;
}
