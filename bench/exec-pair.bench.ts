// Deciding whether a change to the engine-program path (host/pipeline/exec-*.ts) lowers the
// pipe's cost: this build and another build of jetlag, alternating in one process, closed loop,
// on the same events through the C++ example (examples/engines/cpp). Separate runs cannot
// decide it on this machine: the pipe's cost moves by 2x from minute to minute with the load.
//
//   git worktree add /tmp/before COMMIT && (cd /tmp/before && ln -s "$PWD/../main/node_modules" . && npx tsc -p host/tsconfig.json)
//   node dist/bench/exec-pair.bench.js /tmp/before/dist [--workers N] [--rounds N] [--events N]
//
// Per round, each build runs once (the order alternates); printed: each run's pipe's cost p50
// and p99 (round trip - the program's own time, per event), and at the end the median of the
// paired p50 ratios (this build / the other). Events are invented (the toy generator).

import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { runEvents } from '../host/pipeline/run.js';
import type { RunOptions } from '../host/pipeline/run-plan.js';
import type { RunSummary } from '../host/measure/summary.js';
import { writeToyEventFile } from './support/toy-event-file.js';

function option(name: string, fallback: number): number {
  const at = process.argv.indexOf(name);
  return at > 0 ? Number(process.argv[at + 1]) : fallback;
}

const otherDist = process.argv[2];
if (!otherDist || otherDist.startsWith('--')) {
  process.stderr.write('usage: node dist/bench/exec-pair.bench.js OTHER_DIST [--workers N] [--rounds N] [--events N]\n');
  process.exit(2);
}
const workers = option('--workers', 1);
const rounds = option('--rounds', 6);
const events = option('--events', 400);
const other = (await import(pathToFileURL(join(resolve(otherDist), 'host', 'pipeline', 'run.js')).href)) as { runEvents: typeof runEvents };

const dir = mkdtempSync(join(tmpdir(), 'jetlag-exec-pair-'));
try {
  execFileSync('make', ['-s', '-C', new URL('../../examples/engines/cpp/', import.meta.url).pathname, `BUILD=${dir}`], { stdio: ['ignore', 'ignore', 'inherit'] });
  const input = join(dir, 'pileup200.events');
  writeToyEventFile(input, { events, pileup: 200 });
  const options: RunOptions = {
    input, workers, check: { mode: 'none', fraction: 0, seed: 1 }, engine: 'wasm', progress: null,
    program: { argv: [join(dir, 'pairwise-clusterer')], label: 'exec:pairwise-clusterer', timeoutMs: 60_000, maxRestarts: 0, tolerance: null },
  };
  const describe = (summary: RunSummary) =>
    `pipe's cost p50 ${summary.latency.pipe?.p50_us?.toFixed(0)} µs, p99 ${summary.latency.pipe?.p99_us?.toFixed(0)} µs; own time p50 ${summary.latency.service.p50_us?.toFixed(0)} µs`;
  process.stdout.write(`exec-pair: ${events} pileup-200 toy events, ${workers} worker(s), closed loop; this build against ${otherDist}\n`);
  const ratios: number[] = [];
  for (let round = 1; round <= rounds; round++) {
    const load = loadavg()[0];
    const order: ['this' | 'other', typeof runEvents][] = round % 2 === 1 ? [['other', other.runEvents], ['this', runEvents]] : [['this', runEvents], ['other', other.runEvents]];
    const p50 = { this: 0, other: 0 };
    for (const [name, run] of order) {
      const summary = await run(options);
      if (summary.events.ok !== events) throw new Error(`exec-pair: ${name} answered ${summary.events.ok} of ${events} events`);
      p50[name] = summary.latency.pipe?.p50_us ?? NaN;
      process.stdout.write(`round ${round}, ${name} build: ${describe(summary)}; load average ${load.toFixed(1)}\n`);
    }
    ratios.push(p50.this / p50.other);
  }
  ratios.sort((a, b) => a - b);
  const middle = ratios.length >> 1;
  const median = ratios.length % 2 === 1 ? ratios[middle] : (ratios[middle - 1] + ratios[middle]) / 2;
  process.stdout.write(`pipe's cost p50, this build / the other, median of ${ratios.length} paired rounds: ${median.toFixed(2)} (lower in ${ratios.filter((r) => r < 1).length} of ${ratios.length})\n`);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
