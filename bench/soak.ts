// The soak: a long open-loop run over a generated stream (npm run soak; node dist/bench/soak.js
// [--minutes M] [--rate HZ] [--workers N] [--pileup MU] [--sample-seconds S] [--distinct D]
// [--check-fraction F] [--json FILE]). Events are invented (toy generator, the fictional
// "Halden ring"), made on the fly by a child process (soak-stream.ts) and fed through a named
// pipe into the real run: the framer, the event ring, the workers and their wasm engines, at a
// fixed rate well below capacity, for rate x minutes events. No file of that size is written.
//
// It reports, and writes to bench/results/soak.json:
//   - resident memory of this process (main thread and workers: one process) every few
//     seconds, and whether it stayed flat (soak-figures.ts); the generator's is not in it;
//   - events offered (written by the generator), read, ok, invalid, failed, and lost =
//     offered - (ok + invalid + failed), counted, not assumed;
//   - service and end-to-end latency of the first and the last tenth of the events, and
//     whether they drifted beyond the noise between tenths; the harness's own dispatch
//     lateness apart;
//   - bytes streamed, and the load average along the way.
// Exit status 1 when memory was not flat or an event was lost; 2 on bad usage.
//
// Default rate: 400 Hz, well below capacity: one worker sustained 1313, 1754 and 1413 events/s
// (median 1413) on pileup-200 toy events in closed-loop runs on this 2-core machine (`jetlag run
// FILE --workers 1 --check none`, load average 5.2 to 4.6), so 28 % of it; lower than 40 %
// because an open loop costs more per event than a closed one (a message per event, no batch)
// and the shared machine's load reached 7-9 during trial soaks, where 500 Hz was still
// sustained but with stalls of 0.1 s.

import { fork, execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { UsageError } from '../host/errors.js';
import { runEvents } from '../host/pipeline/run.js';
import { LatencyRecorder, type LatencyStats } from '../host/measure/latency.js';
import { describeMachine, type RunSummary } from '../host/measure/summary.js';
import { driftVerdict, memoryVerdict } from './soak-figures.js';
import type { StreamMessage } from './soak-stream.js';

interface SoakOptions { minutes: number; rateHz: number; workers: number; pileup: number; sampleSeconds: number; distinct: number; checkFraction: number; json: string }

const here = dirname(fileURLToPath(import.meta.url));
const NUMERIC: Record<string, keyof SoakOptions> = {
  '--minutes': 'minutes', '--rate': 'rateHz', '--workers': 'workers', '--pileup': 'pileup',
  '--sample-seconds': 'sampleSeconds', '--distinct': 'distinct', '--check-fraction': 'checkFraction',
};

function parseOptions(argv: string[]): SoakOptions {
  const options: SoakOptions = { minutes: 30, rateHz: 400, workers: 1, pileup: 200, sampleSeconds: 5, distinct: 1000, checkFraction: 0, json: join(here, '../../bench/results/soak.json') };
  for (let k = 0; k < argv.length; k += 2) {
    const name = argv[k];
    const value = argv[k + 1];
    if (value === undefined) throw new UsageError(`soak: ${name} needs a value`);
    if (name === '--json') { options.json = value; continue; }
    const key = NUMERIC[name];
    if (!key) throw new UsageError(`soak: unknown option ${name} (options: ${Object.keys(NUMERIC).join(', ')}, --json)`);
    const number = Number(value);
    if (!Number.isFinite(number) || number < 0) throw new UsageError(`soak: ${name} must be a number >= 0, got ${value}`);
    (options[key] as number) = number;
  }
  if (!(options.minutes > 0 && options.rateHz > 0 && options.sampleSeconds > 0)) throw new UsageError('soak: --minutes, --rate and --sample-seconds must be above 0');
  if (!Number.isInteger(options.workers) || options.workers < 1) throw new UsageError(`soak: --workers must be a whole number >= 1, got ${options.workers}`);
  if (!Number.isInteger(options.distinct) || options.distinct < 1) throw new UsageError(`soak: --distinct must be a whole number >= 1, got ${options.distinct}`);
  if (options.checkFraction > 1) throw new UsageError(`soak: --check-fraction must lie in 0..1, got ${options.checkFraction}`);
  return options;
}

const MiB = 2 ** 20;
const line = (text: string) => process.stdout.write(text + '\n');
const us = (value: number | null) => (value === null || !Number.isFinite(value) ? '—' : value.toFixed(value < 100 ? 1 : 0));
const statsLine = (name: string, s: LatencyStats) => `${name.padEnd(26)} p50 ${us(s.p50_us).padStart(7)}  p99 ${us(s.p99_us).padStart(7)}  mean ${us(s.mean_us).padStart(7)} µs  (${s.count} events)`;

async function soak(options: SoakOptions): Promise<number> {
  const events = Math.round(options.rateHz * options.minutes * 60);
  const dir = mkdtempSync(join(tmpdir(), 'jetlag-soak-'));
  const pipe = join(dir, 'events.pipe');
  execFileSync('mkfifo', [pipe]);
  const loadStart = loadavg()[0];
  line(`soak: ${events} invented toy events (Halden ring, pileup ${options.pileup}, ${options.distinct} distinct, generated on the fly) at a fixed ${options.rateHz} Hz ` +
    `for ${options.minutes} min, ${options.workers} worker(s), wasm engine, check fraction ${options.checkFraction}; RSS every ${options.sampleSeconds} s; load average ${loadStart.toFixed(2)}`);

  // the generator, a process of its own; it blocks on the pipe until the run opens it
  const stream = { events: 0, bytes: 0, finished: false, failure: null as string | null };
  const child = fork(join(here, 'soak-stream.js'), [pipe, String(events), String(options.pileup), String(options.distinct), '2026'], { stdio: ['ignore', 'inherit', 'inherit', 'ipc'] });
  child.on('message', (message: StreamMessage) => {
    stream.events = message.events;
    stream.bytes = message.bytes;
    if (message.kind !== 'progress') stream.finished = true;
    if (message.kind === 'failed') stream.failure = message.message ?? 'the pipe closed';
  });
  const childExited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));

  // per tenth of the events (by event number, which the generator counts from 0)
  const service = Array.from({ length: 10 }, () => new LatencyRecorder());
  const endToEnd = Array.from({ length: 10 }, () => new LatencyRecorder());
  let observed = 0;
  const problems: string[] = [];
  const samples: { tSeconds: number; rssMiB: number; heapUsedMiB: number; externalMiB: number; eventsDone: number; bytesStreamed: number; load1: number }[] = [];
  const baselineRssMiB = process.memoryUsage.rss() / MiB;
  const startMs = Date.now();
  const sample = () => {
    const memory = process.memoryUsage();
    // heap: this thread's JavaScript heap; external: memory held outside it, array buffers included
    const s = { tSeconds: (Date.now() - startMs) / 1000, rssMiB: memory.rss / MiB, heapUsedMiB: memory.heapUsed / MiB, externalMiB: memory.external / MiB, eventsDone: observed, bytesStreamed: stream.bytes, load1: loadavg()[0] };
    samples.push(s);
    line(`  t ${s.tSeconds.toFixed(0).padStart(5)} s  RSS ${s.rssMiB.toFixed(1).padStart(6)} MiB  heap ${s.heapUsedMiB.toFixed(1).padStart(5)} MiB  external ${s.externalMiB.toFixed(1).padStart(5)} MiB  ` +
      `events ${String(s.eventsDone).padStart(8)}  streamed ${(s.bytesStreamed / 2 ** 30).toFixed(2)} GiB  load ${s.load1.toFixed(2)}`);
  };
  const sampler = setInterval(sample, options.sampleSeconds * 1000);
  const stop = new AbortController();
  const onSignal = () => stop.abort();
  process.once('SIGINT', onSignal);
  process.once('SIGTERM', onSignal);

  let summary: RunSummary;
  try {
    summary = await runEvents({
      input: pipe, workers: options.workers, arrival: { kind: 'fixed', rateHz: options.rateHz }, engine: 'wasm',
      check: options.checkFraction > 0 ? { mode: 'fraction', fraction: options.checkFraction, seed: 1 } : { mode: 'none', fraction: 0, seed: 1 },
      signal: stop.signal,
      onProblem: (text) => { if (problems.length < 20) { problems.push(text); line(`  problem: ${text}`); } },
      onEvent: (event, _towers, serviceNs, scheduledNs, _startNs, doneNs) => {
        observed++;
        const tenth = Math.min(9, Math.floor((10 * event) / events));
        service[tenth].recordNs(serviceNs);
        endToEnd[tenth].recordNs(doneNs - scheduledNs);
      },
    });
  } finally {
    clearInterval(sampler);
    process.off('SIGINT', onSignal);
    process.off('SIGTERM', onSignal);
    if (!stream.finished) child.kill('SIGTERM');
    await childExited;
    rmSync(dir, { recursive: true, force: true });
  }
  // after the pool has closed: shown, but not part of the series judged for flatness
  const afterRunRssMiB = process.memoryUsage.rss() / MiB;
  const wallSeconds = (Date.now() - startMs) / 1000;

  const { read, ok, invalid, failed } = summary.events;
  const lost = stream.events - (ok + invalid + failed);
  const memory = memoryVerdict(samples.map((s) => s.rssMiB));
  const firstTenth = { service: service[0].stats(), endToEnd: endToEnd[0].stats() };
  const lastTenth = { service: service[9].stats(), endToEnd: endToEnd[9].stats() };
  const serviceDrift = driftVerdict(service.map((r) => r.stats().p50_us ?? NaN));
  const endToEndDrift = driftVerdict(endToEnd.map((r) => r.stats().p50_us ?? NaN));
  const loadEnd = loadavg()[0];
  const loadMean = samples.reduce((sum, s) => sum + s.load1, 0) / samples.length;

  line('');
  line(`soak finished${summary.partial ? ` (partial: ${summary.partialReason})` : ''}: ${wallSeconds.toFixed(0)} s, ${options.rateHz} Hz offered, ` +
    `sustained ${summary.saturation?.sustainedHz?.toFixed(0) ?? '—'} Hz; streamed ${stream.bytes} bytes (${(stream.bytes / 2 ** 30).toFixed(2)} GiB)${stream.failure ? `; generator: ${stream.failure}` : ''}`);
  line(`events: offered ${stream.events}, read ${read}, ok ${ok}, invalid ${invalid}, failed ${failed}, lost ${lost} (offered - ok - invalid - failed); seen by the observer ${observed}`);
  line(`RSS: before the run ${baselineRssMiB.toFixed(1)} MiB, after it ${afterRunRssMiB.toFixed(1)} MiB; mean of the first tenth of ${memory.samples} samples ${memory.firstTenthMiB.toFixed(1)}, middle tenth ${memory.middleTenthMiB.toFixed(1)}, ` +
    `last tenth ${memory.lastTenthMiB.toFixed(1)} MiB (${(memory.change * 100).toFixed(2)} %), max ${memory.maxMiB.toFixed(1)} MiB: ${memory.flat ? 'flat' : 'NOT FLAT'} (${memory.rule})`);
  line(statsLine('service, first tenth', firstTenth.service));
  line(statsLine('service, last tenth', lastTenth.service));
  line(statsLine('end-to-end, first tenth', firstTenth.endToEnd));
  line(statsLine('end-to-end, last tenth', lastTenth.endToEnd));
  for (const [name, d] of [['service', serviceDrift], ['end-to-end', endToEndDrift]] as const) {
    line(`${name} p50 by tenth: ${d.tenthsUs.map((x) => us(x)).join(', ')} µs; fitted rise ${us(d.fittedRiseUs)} µs, noise ${us(d.residualUs)} µs: ${d.drift ? 'DRIFT' : 'no drift beyond noise'} (${d.rule})`);
  }
  line(`end-to-end = scheduled arrival to result back on the main thread (wait + service + return); harness's own dispatch lateness apart: ` +
    `p50 ${us(summary.harness.dispatchLateness.p50_us)} µs, p99 ${us(summary.harness.dispatchLateness.p99_us)} µs`);
  line(`load average: ${loadStart.toFixed(2)} at the start, ${loadMean.toFixed(2)} mean of the samples, ${loadEnd.toFixed(2)} at the end (${describeMachine().cores} cores)`);

  const result = {
    format: 'jetlag-soak', machine: describeMachine(), startedAt: new Date(startMs).toISOString(), options: { ...options, json: undefined, events },
    wallSeconds, partial: summary.partial, partialReason: summary.partialReason, bytesStreamed: stream.bytes, generatorFailure: stream.failure,
    events: { offered: stream.events, read, ok, invalid, failed, lost, observed }, problems,
    memory: { baselineRssMiB, afterRunRssMiB, ...memory, samples },
    latency: { firstTenth, lastTenth, serviceDrift, endToEndDrift, dispatchLateness: summary.harness.dispatchLateness, saturation: summary.saturation },
    loadAverage: { start: loadStart, meanOfSamples: loadMean, end: loadEnd },
    verdict: { memoryFlat: memory.flat, eventsLost: lost, latencyDrift: serviceDrift.drift || endToEndDrift.drift, pass: memory.flat && lost === 0 },
  };
  mkdirSync(dirname(options.json), { recursive: true });
  writeFileSync(options.json, JSON.stringify(result, null, 2) + '\n');
  line(`result: ${options.json}; ${result.verdict.pass ? 'PASS' : 'FAIL'} (memory ${memory.flat ? 'flat' : 'not flat'}, ${lost} lost)`);
  return result.verdict.pass ? 0 : 1;
}

try {
  process.exitCode = await soak(parseOptions(process.argv.slice(2)));
} catch (error) {
  if (!(error instanceof UsageError)) throw error;
  process.stderr.write(`${error.message}\n`);
  process.exitCode = 2;
}
