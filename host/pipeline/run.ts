// The streamed run: file -> records -> batches -> workers -> results -> tally -> summary.
// runEvents() is the programmatic entry (commands/run.ts and the demo call it). One run reads
// the input once; --find-rate and --scan-workers repeat runs (studies.ts). The steps of a run:
//   planRun (run-plan.ts) -> open the input -> refuse an unusable engine -> openOutputs
//   (run-setup.ts) -> pool and warm-up
//   -> the timed pass: closed loop, RecordFeed.feed (run-feed.ts: records into batches,
//      batches to the pool); open loop, OpenLoopFeed.feed (open-loop-feed.ts: each event to a
//      worker at its scheduled arrival)
//   -> RunDelivery.deliver per batch or event (run-delivery.ts: tally, problem lines, outputs)
//   -> the check pass (check-pass.ts: the --check sample against the reference, untimed)
//   -> close the outputs -> summarize (run-summary.ts)
//
// A closed loop measures capacity: events/s and each event's service time in its worker. An
// open loop measures latency under load: per event from its scheduled arrival (arrivals.ts) to
// its result back on the main thread. Events whose results wait for an earlier one before being
// written in input order are not charged for that wait: in-order output is a property of the
// file, not of a trigger.

import { openEventSource } from '../input/event-source.js';
import { UsageError } from '../errors.js';
import { makeClusterer } from '../clustering/clusterers.js';
import { ArrivalSchedule, nowNs } from './arrivals.js';
import { BatchPool } from './pool.js';
import { RecordFeed } from './run-feed.js';
import { RunDelivery } from './run-delivery.js';
import { OpenLoopFeed } from './open-loop-feed.js';
import { runCheckPass } from './check-pass.js';
import { DEFAULT_MAX_RECORD_BYTES } from '../input/record-framer.js';
import { MachineLoadProbe } from '../measure/machine-load.js';
import { shardInput } from './shard-input.js';
import type { RunSummary } from '../measure/summary.js';
import { ProgressBar } from '../measure/progress.js';
import type { Grid } from '../types.js';
import { planRun, type RunOptions } from './run-plan.js';
import { openOutputs, progressBytesTotal, refuseUnusableEngine, workerConfigOf } from './run-setup.js';
import { engineStoppedReason, summarize } from './run-summary.js';
import { asProgramError } from './exec-error.js';

export async function runEvents(options: RunOptions): Promise<RunSummary> {
  const plan = planRun(options);
  const schedule = new ArrivalSchedule(plan.arrival);
  const source = await openEventSource(options.input, { fileLabel: plan.label, grid: options.grid, maxEventGap: options.maxEventGap, inflate: options.inflate });
  // a shard of a plain event file with a record index reads only its own batches
  const input = await shardInput(options, plan, source);
  const grid: Grid = source.header.grid;
  const program = options.program ?? null;
  if (program !== null && (plan.pileup || plan.grooming)) throw new UsageError('run: --engine exec: clusters only; the pileup steps, --trim and --softdrop run on the wasm engine or the reference');
  if (plan.engine === 'wasm' && program === null) refuseUnusableEngine(grid, plan.settings);
  // the pileup settings' limits need the grid; a chain the workers would refuse is refused here
  if (plan.pileup || plan.grooming) makeClusterer(plan.engine, grid, plan.settings, null, plan.pileup, 'run', plan.grooming);
  const bytesTotal = progressBytesTotal(options);
  const config = workerConfigOf(plan, grid, Boolean(options.out), program);
  // an engine program that used up its restarts stops the reading (exec-delivery.ts)
  const engineStop = new AbortController();
  const { jetsFile, jetsHeaderPending, repro } = await openOutputs(options, plan, grid, source.header.label);
  const delivery = new RunDelivery(
    { label: plan.label, openLoop: schedule.openLoop, budgetNs: plan.budgetNs, reproPath: options.repro ?? null, onProblem: options.onProblem, onEvent: options.onEvent, onEngineStopped: () => engineStop.abort() },
    program?.label ?? plan.engine, jetsFile, jetsHeaderPending, repro,
  );

  const pool = new BatchPool({
    workers: plan.workers,
    maxInFlight: options.maxInFlight ?? 2 * plan.workers,
    config,
    workerFile: options.workerFile,
    deliver: (outcome) => delivery.deliver(outcome),
  });
  // threads and engines are made before the clock starts: start-up is not throughput
  // a program that cannot be started (or held on its CPU) stops the run with its own one line
  await pool.warmUp(plan.workers).catch((error: unknown) => { throw program ? asProgramError(error, program.label) : error; });
  const feedPlan = { batch: plan.batch, shard: plan.shard, maxEvents: options.maxEvents, signal: options.signal ? AbortSignal.any([options.signal, engineStop.signal]) : engineStop.signal };
  const feed = schedule.openLoop
    ? new OpenLoopFeed({ ...feedPlan, workers: plan.workers, maxRecordBytes: DEFAULT_MAX_RECORD_BYTES, cpuWaitPerEvent: options.cpuWaitPerEvent ?? false }, schedule, pool, delivery)
    : new RecordFeed(feedPlan, pool, delivery);
  const progress = new ProgressBar(options.progress ?? process.stderr, { eventsDone: () => delivery.tally.read, bytesDone: () => delivery.offsetDone }, { bytes: bytesTotal }, Boolean(options.progress));
  let wallSeconds = 0;
  progress.start();
  const machineLoad = new MachineLoadProbe(program !== null);
  // either loop: an index counts the records of the whole file, of which a shard saw only its own
  try {
    if (feed instanceof OpenLoopFeed) {
      await feed.feed(input.records);
      if (input.recordsInFile !== null && feed.partialReason === null) feed.records = input.recordsInFile;
      wallSeconds = Math.max(0, feed.endNs - feed.startNs) / 1e9;
    } else {
      const startNs = nowNs();
      await feed.feed(input.records);
      await pool.drain();
      if (input.recordsInFile !== null && feed.partialReason === null) feed.records = input.recordsInFile;
      wallSeconds = (nowNs() - startNs) / 1e9;
    }
    delivery.tally.recordMachineLoad(machineLoad);
    await delivery.jetsWritten();
  } catch (error) {
    await delivery.abortOutputs();
    throw error;
  } finally {
    progress.stop();
    await pool.close();
  }
  // the reference after the timing, in workers of its own
  try {
    await runCheckPass(delivery.checkSample, { workers: plan.workers, batch: plan.batch, config, workerFile: options.workerFile, signal: options.signal }, delivery);
  } catch (error) {
    await delivery.abortOutputs();
    throw error;
  }
  // a program that used up its restarts ends the run as an interruption does: what was
  // answered before it is kept (jets, summary marked partial), and the command exits 2
  if (delivery.engineStopped !== null) feed.partialReason = engineStoppedReason(delivery.engineStopped);
  await delivery.closeRepro();
  delivery.tally.bytesRead = feed.lastOffset;
  await delivery.closeJets();
  return summarize(options, plan, delivery, feed, { grid, inputLabel: source.header.label, wallSeconds });
}
