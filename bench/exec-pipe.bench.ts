// Benchmark of an outside program as the engine (`run --engine exec:`): the C++ example
// (examples/engines/cpp) on pileup-200 events. Run as `npm run bench:pool -- --exec-pipe` (or
// node dist/bench/exec-pipe.bench.js [--quick] after npm run build):
//   1. builds the example into a temporary folder (Debian's protobuf; skipped with a line when
//      it cannot be built);
//   2. closed loop, 1 worker, rounds, then 2 workers: per event the pipe's cost, round trip
//      (jetlag writes the event -> jetlag has read the whole answer) minus the program's own
//      time (cluster_time_ns), p50 and p99 of the per-event differences; each round twice in a
//      row, without and with --program-cpu same (each worker and its program on one CPU), so
//      the median of the rounds' ratios of the two p50s is paired;
//   3. open loop, 1 worker (the default in an open loop on 2 cores) at a quarter of what one
//      worker sustains: the same figures with the program idle between events, the same pairs;
//   4. the program's own time against the WASM engine's service time on the same events,
//      closed loop, 1 worker: p50, p99 and the median of the per-event ratios;
//   5. the machine's floor at the moment: exec-pipe-floor.c, a C parent and a C child on a
//      socket pair with the events' record size and the program's median own time, no codecs
//      and no event loop: what two wake-ups and the copies cost here, whatever jetlag does;
//      then the same with both on one CPU (taskset), where no wake-up finds its CPU idle.
// Events are invented (the toy generator). Figures go to stdout and to
// bench/results/exec-pipe.json (not committed). The machine is shared: each figure carries the
// load average its run started at.

import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { runEvents } from '../host/pipeline/run.js';
import type { RunOptions } from '../host/pipeline/run-plan.js';
import { describeMachine, type RunSummary } from '../host/measure/summary.js';
import { LatencyRecorder } from '../host/measure/latency.js';
import { writeToyEventFile } from './support/toy-event-file.js';

const quick = process.argv.includes('--quick');
const events = quick ? 150 : 400;
const rounds = quick ? 1 : 3;
const exampleDir = new URL('../../examples/engines/cpp/', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'jetlag-exec-bench-'));
const results: Record<string, unknown> = { machine: describeMachine() };

function line(text: string): void {
  process.stdout.write(text + '\n');
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
const us = (value: number | null | undefined) => (value === null || value === undefined || Number.isNaN(value) ? '—' : value.toFixed(value < 100 ? 1 : 0));

/**
 * Section 5: p10, p50, p90, p99 of the C pair's round trip minus the child's own time, µs;
 * null when it cannot be built. `oneCpu`: both processes on CPU 0 (taskset), so that neither
 * wake-up has to bring an idle CPU back (on this virtual machine, the larger part of the floor).
 */
function machineFloor(workUs: number, recordBytes: number, oneCpu: boolean): number[] | null {
  const floorProgram = join(dir, 'exec-pipe-floor');
  try {
    execFileSync('cc', ['-O2', '-o', floorProgram, new URL('../../bench/exec-pipe-floor.c', import.meta.url).pathname], { stdio: ['ignore', 'ignore', 'pipe'] });
    const argv = [floorProgram, String(events), String(Math.round(workUs)), String(recordBytes), String(recordBytes)];
    const printed = oneCpu ? execFileSync('taskset', ['-c', '0', ...argv], { encoding: 'utf8' }) : execFileSync(argv[0], argv.slice(1), { encoding: 'utf8' });
    return printed.trim().split(' ').map(Number);
  } catch (error) {
    line(`exec-pipe: the C floor could not be built or run (${(error as Error).message.split('\n')[0]})`);
    return null;
  }
}

/** The example built into the temporary folder; null (and why) when it cannot be. */
function buildExample(): string | null {
  try {
    execFileSync('make', ['-s', '-C', exampleDir, `BUILD=${dir}`], { stdio: ['ignore', 'ignore', 'pipe'] });
    return join(dir, 'pairwise-clusterer');
  } catch (error) {
    line(`exec-pipe: the C++ example could not be built (${(error as Error).message.split('\n')[0]}); install g++, make, protobuf-compiler and libprotobuf-dev`);
    return null;
  }
}

/** the rounds with --program-cpu same beside the default ones */
interface PairedRounds {
  anyCpu: ProgramRound[];
  sameCpu: ProgramRound[];
  /** median over the rounds of pipe p50 with --program-cpu same / without */
  medianPipeP50Ratio: number | null;
}

interface ProgramRound {
  /** the pipe's cost when the scheduler was least in the way, to set beside the floor's p10 */
  pipeP10Us: number | null;
  pipeP50Us: number | null;
  pipeP99Us: number | null;
  serviceP50Us: number | null;
  serviceP99Us: number | null;
  roundTripP50Us: number | null;
  eventsPerSecond: number;
  load: number | null;
}

/** One run whose figures count only if every event was answered. */
async function timedRun(options: RunOptions): Promise<RunSummary> {
  const summary = await runEvents(options);
  const { read, ok, failed, invalid } = summary.events;
  if (ok !== read) throw new Error(`bench: ${failed} failed and ${invalid} invalid of ${read} events`);
  return summary;
}

function programRound(summary: RunSummary): ProgramRound {
  const { latency } = summary;
  const pipe = summary.histograms.pipe;
  return {
    pipeP10Us: pipe ? LatencyRecorder.decode(pipe, 'pipe').percentileNs(10) / 1e3 : null,
    pipeP50Us: latency.pipe?.p50_us ?? null, pipeP99Us: latency.pipe?.p99_us ?? null,
    serviceP50Us: latency.service.p50_us, serviceP99Us: latency.service.p99_us,
    roundTripP50Us: latency.roundTrip?.p50_us ?? null,
    eventsPerSecond: summary.throughput.eventsPerSecond, load: summary.machineLoad?.loadAverageStart ?? null,
  };
}

function describeRound(what: string, round: ProgramRound): string {
  return `${what}: pipe's cost p10 ${us(round.pipeP10Us)} µs, p50 ${us(round.pipeP50Us)} µs, p99 ${us(round.pipeP99Us)} µs; ` +
    `own time p50 ${us(round.serviceP50Us)} µs, p99 ${us(round.serviceP99Us)} µs; round trip p50 ${us(round.roundTripP50Us)} µs; ` +
    `${round.eventsPerSecond.toFixed(0)} events/s; load average ${round.load?.toFixed(1) ?? '—'}`;
}

const program = buildExample();
if (program !== null) {
  const file = join(dir, 'pileup200.events');
  // `events` distinct pileup-200 toy events
  const { meanTowers, meanRecordBytes } = writeToyEventFile(file, { events, pileup: 200 });
  line(`exec-pipe: ${events} pileup-200 toy events, mean ${meanTowers.toFixed(0)} towers per event; C++ example built in ${dir}`);
  const base: RunOptions = {
    input: file, check: { mode: 'none', fraction: 0, seed: 1 }, engine: 'wasm',
    program: { argv: [program], label: `exec:${program}`, timeoutMs: 60_000, maxRestarts: 0, tolerance: null },
  };

  /** `count` rounds of `options`, each once without and once with --program-cpu same */
  const pairedRounds = async (what: string, options: RunOptions, count: number): Promise<PairedRounds> => {
    const paired: PairedRounds = { anyCpu: [], sameCpu: [], medianPipeP50Ratio: null };
    const ratios: number[] = [];
    for (let r = 0; r < count; r++) {
      const anyCpu = programRound(await timedRun(options));
      line(describeRound(`${what}, round ${r + 1}`, anyCpu));
      const sameCpu = programRound(await timedRun({ ...options, program: { ...base.program!, programCpu: 'same' } }));
      line(describeRound(`${what}, round ${r + 1}, --program-cpu same`, sameCpu));
      paired.anyCpu.push(anyCpu);
      paired.sameCpu.push(sameCpu);
      if (anyCpu.pipeP50Us !== null && sameCpu.pipeP50Us !== null && anyCpu.pipeP50Us > 0) ratios.push(sameCpu.pipeP50Us / anyCpu.pipeP50Us);
    }
    paired.medianPipeP50Ratio = ratios.length > 0 ? median(ratios) : null;
    line(`${what}: pipe's cost p50 with --program-cpu same / without, median of ${ratios.length} paired rounds: ${paired.medianPipeP50Ratio?.toFixed(2) ?? '—'}; ` +
      `medians of the rounds' p50s ${us(median(paired.anyCpu.map((x) => x.pipeP50Us ?? NaN)))} µs without, ${us(median(paired.sameCpu.map((x) => x.pipeP50Us ?? NaN)))} µs with`);
    return paired;
  };

  // 2. closed loop
  const closedOnePaired = await pairedRounds('closed loop, 1 worker', { ...base, workers: 1 }, rounds);
  const closedOne = closedOnePaired.anyCpu;
  const closedTwo = await pairedRounds('closed loop, 2 workers', { ...base, workers: 2 }, rounds);
  results.closedLoop = { events, meanTowers, oneWorker: closedOnePaired, twoWorkers: closedTwo };

  // 3. open loop at a quarter of one worker's closed-loop rate
  const rateHz = median(closedOne.map((round) => round.eventsPerSecond)) / 4;
  const open = await pairedRounds(`open loop, 1 worker at ${rateHz.toFixed(1)} Hz`, { ...base, workers: 1, arrival: { kind: 'fixed', rateHz } }, rounds);
  results.openLoop = { rateHz, ...open };

  // 4. the program's own time against the engine's, event by event
  const programNs = new Map<number, number>();
  const programSummary = await timedRun({ ...base, workers: 1, onEvent: (event, _towers, serviceNs) => programNs.set(event, serviceNs) });
  const wasmNs = new Map<number, number>();
  const wasmSummary = await timedRun({ ...base, program: null, workers: 1, onEvent: (event, _towers, serviceNs) => wasmNs.set(event, serviceNs) });
  const ratios: number[] = [];
  for (const [event, ns] of programNs) {
    const engineNs = wasmNs.get(event);
    if (engineNs !== undefined && engineNs > 0) ratios.push(ns / engineNs);
  }
  const side = {
    programP50Us: programSummary.latency.service.p50_us, programP99Us: programSummary.latency.service.p99_us,
    wasmP50Us: wasmSummary.latency.service.p50_us, wasmP99Us: wasmSummary.latency.service.p99_us,
    medianRatio: median(ratios), pairedEvents: ratios.length,
    load: [programSummary.machineLoad?.loadAverageStart ?? null, wasmSummary.machineLoad?.loadAverageStart ?? null],
  };
  results.serviceSideBySide = side;
  line(`same events, closed loop, 1 worker: C++ example's own time p50 ${us(side.programP50Us)} µs, p99 ${us(side.programP99Us)} µs; ` +
    `WASM engine's service p50 ${us(side.wasmP50Us)} µs, p99 ${us(side.wasmP99Us)} µs; C++ / WASM per event, median of ${side.pairedEvents}: ` +
    `${side.medianRatio.toFixed(1)}×; load average ${side.load.map((x) => x?.toFixed(1) ?? '—').join(', ')}`);

  // 5. the machine's floor: the same sizes and own time, C on both sides
  const workUs = median(closedOne.map((round) => round.serviceP50Us ?? 0));
  const recordBytes = Math.round(meanRecordBytes);
  for (const oneCpu of [false, true]) {
    const floor = machineFloor(workUs, recordBytes, oneCpu);
    if (floor === null) continue;
    const floorLoad = loadavg()[0];
    results[oneCpu ? 'machineFloorOneCpu' : 'machineFloor'] = { workUs, recordBytes, p10Us: floor[0], p50Us: floor[1], p90Us: floor[2], p99Us: floor[3], load: floorLoad };
    line(`machine's floor${oneCpu ? ', both on CPU 0' : ''} (C parent and child on a socket pair, ${recordBytes} bytes each way, ${workUs.toFixed(0)} µs of work, ${events} rounds): ` +
      `round trip minus work p10 ${us(floor[0])} µs, p50 ${us(floor[1])} µs, p90 ${us(floor[2])} µs, p99 ${us(floor[3])} µs; load average ${floorLoad.toFixed(1)} (at its end)`);
  }

  mkdirSync(new URL('../../bench/results/', import.meta.url), { recursive: true });
  writeFileSync(new URL('../../bench/results/exec-pipe.json', import.meta.url), JSON.stringify(results, null, 2) + '\n');
}
rmSync(dir, { recursive: true, force: true });
