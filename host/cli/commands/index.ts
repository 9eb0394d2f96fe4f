// jetlag index EVENTS: writes EVENTS.index, the byte length of every event record, so that
// `jetlag run EVENTS --shard k/n` reads and frames only its own batches (record-index.ts).

import { parseArgs, type CommandIo, type CommandMain, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import { buildRecordIndex, indexPathOf } from '../../input/record-index.js';
import { OutputFile } from '../../output/output-file.js';
import { FORCE_OPTION } from '../common-options.js';

export const spec: CommandSpec = {
  name: 'index',
  summary: 'Write the record index of a plain event file (EVENTS.index), so that run --shard k/n reads only its own part of the file.',
  usage: 'jetlag index <events> [--out <file>]',
  positionals: { min: 1, max: 1 },
  options: [
    { name: 'out', kind: 'string', argument: '<file>', description: 'where to write the index (default: <events>.index, where run looks for it)' },
    { name: 'quiet', kind: 'flag', short: 'q', description: 'no summary line on stderr' },
    FORCE_OPTION,
  ],
};

export const main: CommandMain = async (argv: string[], io: CommandIo) => {
  const args = parseArgs(spec, argv);
  const events = args.positionals[0];
  if (events === '-') throw new UsageError('index: needs a file, not stdin (a shard seeks in it)');
  const out = (args.values.out as string | undefined) ?? indexPathOf(events);
  const { bytes, records } = await buildRecordIndex(events);
  const file = await OutputFile.open(out, { force: args.values.force === true });
  try {
    const pending = file.write(bytes);
    if (pending) await pending;
    await file.close();
  } catch (error) {
    await file.abort();
    throw error;
  }
  if (args.values.quiet !== true) io.stderr.write(`jetlag index: ${out}: ${records} event records of ${events}\n`);
  return 0;
};
