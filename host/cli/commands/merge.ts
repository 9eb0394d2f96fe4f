// jetlag merge SUMMARY...: add the summaries of sharded runs (--shard k/n) into one, exactly:
// counts add, histograms add bucket by bucket, so merged percentiles are those of a single
// run over the same events.

import { parseArgs, type CommandIo, type CommandMain, type CommandSpec } from '../args.js';
import { UsageError } from '../../errors.js';
import type { RunSummary } from '../../measure/summary.js';
import { mergeSummaries, readSummary } from '../../measure/summary-merge.js';
import { formatReport } from '../../measure/report.js';
import { writeTextFile } from '../../output/output-file.js';
import { FORCE_OPTION } from '../common-options.js';

export const spec: CommandSpec = {
  name: 'merge',
  summary: 'Add the JSON summaries of sharded runs (jetlag run --shard k/n --json ...) into one summary; exits 1 when shards are missing or a shard was partial.',
  usage: 'jetlag merge <summary.json>... [--json <file>]',
  positionals: { min: 1, max: Number.MAX_SAFE_INTEGER },
  options: [
    { name: 'json', kind: 'string', argument: '<file>', description: 'write the merged summary here (default: none)' },
    { name: 'quiet', kind: 'flag', short: 'q', description: 'do not print the report' },
    FORCE_OPTION,
  ],
};

export const main: CommandMain = async (argv: string[], io: CommandIo) => {
  const args = parseArgs(spec, argv);
  const inputs = args.positionals.map((name) => ({ name, summary: readSummary(name) }));
  let merged: RunSummary;
  try {
    merged = mergeSummaries(inputs);
  } catch (error) {
    throw new UsageError(`merge: ${(error as Error).message}`);
  }
  const json = args.values.json as string | undefined;
  if (json) await writeTextFile(json, JSON.stringify(merged, null, 2) + '\n', { force: args.values.force === true });
  if (args.values.quiet !== true) io.stdout.write(formatReport(merged));
  if (merged.partial) {
    // a summary of part of the file must not pass for the whole
    io.stderr.write(`jetlag merge: partial: ${merged.partialReason}\n`);
    return 1;
  }
  return 0;
};
