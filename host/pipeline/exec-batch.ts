// One batch's work in a pool worker whose engine is a program (`run --engine exec:…`): the
// records are read as for the wasm engine (cluster-batch.ts readBatch: decode, validate, bin),
// then each valid event goes to the worker's program and waits for its answer (exec-engine.ts),
// then is checked (sampled; bit for bit or in tolerance mode) and encoded. The service time is
// the program's own cluster_time_ns; jetlag's write -> read round trip goes beside it, so the
// difference is the pipe's and the codecs' cost.
//
// The check runs here, after the answer, not in a check pass: the program's jets exist only
// here, and the reference's time is outside both clocks (the program's, and the round trip).
//
// An event the program fails on is failed (BatchResult.exec.failed), and the batch goes on;
// ExecEngineError (restarts used up, program gone) fails the rest of the batch and is reported
// in exec.engineError, on which the main thread stops the run.

import { makeReferenceClusterer } from '../clustering/clusterers.js';
import { EventTowerReader } from '../input/event-towers.js';
import { encodeDelimitedJetsRecord } from '../formats/jets-codec.js';
import { firstJetDifference } from '../validate/bit-exact.js';
import { ToleranceMatcher } from '../validate/tolerance-compare.js';
import { ExecEngine, ExecEngineError, type ExecOutcome } from './exec-engine.js';
import { inCheckSample, joined, readBatch, type WorkerState } from './cluster-batch.js';
import { ENGINE_STOPPED, type ExecBatchFigures, type ExecWorkerConfig } from './exec-run-contract.js';
import { emptyToleranceFigures, type ToleranceFigures } from '../measure/program-figures.js';
import { STAGE_CHECK, STAGE_CLUSTER, STAGE_COUNT, STAGE_ENCODE, STATUS_INVALID, STATUS_OK, type BatchResult, type BatchTask, type WorkerConfig } from './worker-contract.js';
import { producerName } from '../version.js';
import { useProgramGroups } from './exec-groups.js';
import { takeProgramSeat } from './exec-cpu.js';
import type { Clusterer, JetSet } from '../types.js';

export interface ExecWorker {
  state: WorkerState;
  exec: ExecWorkerConfig;
  engine: ExecEngine;
  matcher: ToleranceMatcher | null;
  restartsReported: number;
  faultLines: string[];
}

let worker: ExecWorker | null = null;

function nowNs(): number {
  return performance.now() * 1e6;
}

/** readBatch names the batch's engine from the state's clusterer; the program has no clusterer here */
function programNamed(name: string, config: WorkerConfig): Clusterer {
  return { name, settings: config.settings, cluster: () => { throw new Error('an engine program clusters through ExecEngine'); } };
}

async function startWorker(config: WorkerConfig, exec: ExecWorkerConfig): Promise<ExecWorker> {
  if (exec.groups) useProgramGroups(exec.groups);
  const faultLines: string[] = [];
  const engine = await ExecEngine.start({
    argv: exec.argv, label: exec.label, grid: config.grid, settings: config.settings,
    producer: producerName('run'), streamLabel: 'events of a run',
    timeoutMs: exec.timeoutMs, maxRestarts: exec.maxRestarts, maxInFlight: exec.maxInFlight ?? 1,
    onFault: (line) => faultLines.push(line),
    ...(exec.programCpu === 'same' ? { cpuWorkerIndex: exec.programSeats ? takeProgramSeat(exec.programSeats) : 0 } : {}),
  });
  const state: WorkerState = {
    config,
    reader: new EventTowerReader(config.grid),
    clusterer: programNamed(exec.label, config),
    reference: config.checkFraction > 0 ? makeReferenceClusterer(config.grid, config.settings, null) : null,
    batchIndex: new Int32Array(1 << 16),
    batchEt: new Float64Array(1 << 16),
    batchStart: new Int32Array(1),
    validEvent: new Int32Array(0),
    encodeJets: config.encodeJets ? encodeDelimitedJetsRecord : null,
  };
  return { state, exec, engine, matcher: exec.tolerance ? new ToleranceMatcher(exec.tolerance) : null, restartsReported: 0, faultLines };
}

/** This worker thread's program and reading state, started on its first task. */
export async function execWorkerOf(config: WorkerConfig, exec: ExecWorkerConfig): Promise<ExecWorker> {
  if (!worker) worker = await startWorker(config, exec);
  return worker;
}

/** The piscina entry's exec branch (worker.ts): a warm-up task starts the program, a batch runs through it. */
export async function runExecBatch(config: WorkerConfig, exec: ExecWorkerConfig, task: BatchTask): Promise<BatchResult | null> {
  const running = await execWorkerOf(config, exec);
  const { state } = running;
  if (state.validEvent.length < task.count) {
    state.validEvent = new Int32Array(task.count);
    state.batchStart = new Int32Array(task.count + 1);
  }
  if (task.count === 0) return null;
  return finishExecBatch(running, readBatch(state, task));
}

/** A batch read by readBatch, through the program: its result with the program's figures. */
export async function finishExecBatch(running: ExecWorker, work: ReturnType<typeof readBatch>): Promise<BatchResult> {
  const { task } = work;
  const figures: ExecBatchFigures = {
    roundTripNs: new Float64Array(task.count), failed: [], restarts: 0, faultLines: [],
    tolerance: running.matcher ? emptyToleranceFigures() : null, engineError: null,
  };
  await programPass(running, work.result, work, figures);
  figures.restarts = running.engine.counts.restarts - running.restartsReported;
  running.restartsReported = running.engine.counts.restarts;
  // the program's faults first, as they happened, less those a failed event's line repeats
  // (the event's own fault); then the check's misses
  const failedLines = new Set(figures.failed.map((entry) => entry.message));
  figures.faultLines = running.faultLines.splice(0).filter((line) => !failedLines.has(line)).concat(figures.faultLines);
  work.result.exec = figures;
  return work.result;
}

/** A submission's outcome, or what it threw (kept, so that no later rejection goes unhandled). */
type Submitted = ExecOutcome | { thrown: unknown };

/**
 * --engine-in-flight above 1: every valid event of the batch to the program at once, in input
 * order; the engine writes each as soon as fewer than that many are unanswered.
 */
function submitAll(w: ExecWorker, work: ReturnType<typeof readBatch>): (Promise<Submitted> | null)[] {
  const { state } = w;
  const { out } = work;
  const submitted: (Promise<Submitted> | null)[] = new Array(work.task.count).fill(null);
  let v = 0;
  for (let k = 0; k < work.task.count; k++) {
    if (out.status[k] !== STATUS_OK) continue;
    const from = state.batchStart[v];
    const to = state.batchStart[v + 1];
    v++;
    submitted[k] = w.engine.submit(out.eventNumber[k], state.batchIndex.subarray(from, to), state.batchEt.subarray(from, to))
      .catch((thrown: unknown) => ({ thrown }));
  }
  return submitted;
}

/** Each valid event of the batch, in input order: program, check (sampled), encode. */
async function programPass(w: ExecWorker, result: BatchResult, work: ReturnType<typeof readBatch>, figures: ExecBatchFigures): Promise<void> {
  const { state } = w;
  const { out } = work;
  const { config, reference, encodeJets, batchStart } = state;
  const jetChunks: Uint8Array[] = [];
  // one in flight: submitted one at a time below, as each answer is taken (nothing written ahead)
  const ahead = (w.exec.maxInFlight ?? 1) > 1 ? submitAll(w, work) : null;
  // every answer in before any check or encode: those run without yielding, so an answer still
  // out would be read (and its round trip stamped) only after them, past its watchdog's deadline
  if (ahead !== null) await Promise.all(ahead);
  let nextInvalid = 0;
  let v = 0;
  for (let k = 0; k < work.task.count; k++) {
    const at = k * STAGE_COUNT;
    const event = out.eventNumber[k];
    if (out.status[k] !== STATUS_OK) {
      const reason = result.invalid[nextInvalid++].reason;
      if (encodeJets && event >= 0) jetChunks.push(encodeJets(event, null, 0, reason));
      continue;
    }
    const from = batchStart[v];
    const to = batchStart[v + 1];
    v++;
    const towerIndex = state.batchIndex.subarray(from, to);
    const towerEt = state.batchEt.subarray(from, to);
    let failure: { reason: string; message: string } | null = null;
    let jets: JetSet | null = null;
    // after the program stopped (restarts used up), the events left fail as not clustered
    const settled: Submitted | null = ahead !== null ? await ahead[k]! : figures.engineError !== null ? null
      : await w.engine.submit(event, towerIndex, towerEt).catch((thrown: unknown) => ({ thrown }));
    if (settled !== null && 'thrown' in settled && !(settled.thrown instanceof ExecEngineError)) throw settled.thrown;
    if (settled !== null && 'thrown' in settled && figures.engineError === null) figures.engineError = (settled.thrown as ExecEngineError).message;
    if (settled === null || 'thrown' in settled) {
      failure = { reason: ENGINE_STOPPED, message: `${w.exec.label}, event ${event}: not clustered, the program had stopped` };
    } else if (settled.ok) {
      jets = settled.jets;
      out.stageNs[at + STAGE_CLUSTER] = settled.serviceNs;
      figures.roundTripNs[k] = settled.roundTripNs;
    } else {
      failure = { reason: settled.reason, message: settled.message };
    }
    if (failure !== null || jets === null) {
      // a failed event is not invalid input: it keeps its own count (events.failed)
      out.status[k] = STATUS_INVALID;
      figures.failed.push({ index: k, event, reason: failure!.reason, message: failure!.message });
      if (encodeJets) jetChunks.push(encodeJets(event, null, 0, failure!.message));
      continue;
    }
    result.jets += jets.count;
    const t3 = nowNs();
    let t4 = t3;
    if (reference && inCheckSample(event, config.checkFraction, config.checkSeed)) {
      const expected = reference.cluster(towerIndex, towerEt);
      result.checked++;
      if (w.matcher) {
        if (matchInTolerance(w.matcher, expected, jets, figures.tolerance!)) result.agreeing++;
        else {
          figures.faultLines.push(`check in tolerance mode: event ${event}: ${describeToleranceMiss(w.matcher, expected, jets)}`);
          result.disagreeing.push({ event, bytes: work.data.slice(work.recordStart[k], work.recordStart[k + 1]) });
        }
      } else {
        const difference = firstJetDifference(jets, expected);
        if (difference === null) result.agreeing++;
        else {
          result.differences.push({ event, ...difference });
          result.disagreeing.push({ event, bytes: work.data.slice(work.recordStart[k], work.recordStart[k + 1]) });
        }
      }
      t4 = nowNs();
    }
    let t5 = t4;
    if (encodeJets) {
      jetChunks.push(encodeJets(event, jets, Math.round(out.stageNs[at + STAGE_CLUSTER]), '', out.towersClustered[k]));
      t5 = nowNs();
    }
    out.stageNs[at + STAGE_CHECK] = t4 - t3;
    out.stageNs[at + STAGE_ENCODE] = t5 - t4;
  }
  if (encodeJets) result.jetsBytes = joined(jetChunks);
}

/** One event in tolerance mode: the matcher's verdict, its counts added to the figures. */
function matchInTolerance(matcher: ToleranceMatcher, reference: JetSet, candidate: JetSet, figures: ToleranceFigures): boolean {
  const agrees = matcher.match(reference, candidate);
  figures.checked++;
  if (agrees) figures.agreeing++;
  figures.referenceAbove += matcher.refAbove;
  figures.matched += matcher.refAboveMatched;
  figures.candidateAbove += matcher.candAbove;
  figures.unmatched += matcher.candAboveUnmatched;
  const ptMin = matcher.settings.ptMin;
  for (let r = 0; r < reference.count; r++) {
    if (reference.pt[r] >= ptMin && matcher.refMatch[r] >= 0) {
      figures.responseSum += matcher.refPtRatio[r];
      figures.responseCount++;
    }
  }
  return agrees;
}

/** What made an event miss in tolerance mode, in one line: the first reference jet that does not agree, or the first extra jet. */
function describeToleranceMiss(matcher: ToleranceMatcher, reference: JetSet, candidate: JetSet): string {
  const ptMin = matcher.settings.ptMin;
  for (let r = 0; r < reference.count; r++) {
    if (reference.pt[r] < ptMin || matcher.refAgrees[r]) continue;
    const c = matcher.refMatch[r];
    const where = `reference jet ${r} (pt ${reference.pt[r].toFixed(3)} GeV, y ${reference.rapidity[r].toFixed(3)}, phi ${reference.phi[r].toFixed(3)})`;
    return c < 0 ? `${where} has no program jet within --match-r` : `${where} matched program jet ${c} at pt ratio ${matcher.refPtRatio[r].toFixed(6)}, ΔR ${matcher.refDeltaR[r].toExponential(2)}`;
  }
  for (let c = 0; c < candidate.count; c++) {
    if (matcher.candExtra[c]) return `program jet ${c} (pt ${candidate.pt[c].toFixed(3)} GeV, y ${candidate.rapidity[c].toFixed(3)}, phi ${candidate.phi[c].toFixed(3)}) is extra`;
  }
  return 'the events differ';
}
