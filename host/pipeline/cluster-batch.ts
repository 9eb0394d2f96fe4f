// One batch's work inside a pool worker, in three passes over its events:
//   1. read: decode, validate and bin each record (event-towers.ts); the valid events' towers
//      are gathered into one flat batch
//   2. cluster: the valid events, in one engine call for the whole batch
//   3. check (sampled) and encode each event, in input order
// Each event's time per stage goes into the result's stage table (worker-contract.ts).

import { MIN_ET } from '../clustering/grid.js';
import { batchEventJets, type BatchJets } from '../clustering/engine-batch.js';
import { EnginePileupClusterer } from '../clustering/pileup/engine-chain.js';
import { firstPileupDifference } from '../validate/pileup-bit-exact.js';
import { firstGroomingDifference } from '../validate/grooming-bit-exact.js';
import { GroomingClusterer } from '../clustering/grooming/groomer.js';
import type { EventTowerReader } from '../input/event-towers.js';
import { firstJetDifference } from '../validate/bit-exact.js';
import { hashToUnit } from '../random.js';
import type { Clusterer, JetSet } from '../types.js';
import {
  batchViews, resultBytes, resultViews, STAGE_BIN, STAGE_CHECK, STAGE_CLUSTER, STAGE_COUNT, STAGE_DECODE, STAGE_ENCODE,
  PILEUP_STAGE_COUNT, STAGE_PILEUP_FIRST, STAGE_GROOM,
  STATUS_INVALID, STATUS_OK, type BatchResult, type BatchTask, type WorkerConfig,
} from './worker-contract.js';

/**
 * Where a test worker (tests/support/fault-worker.ts) changes what a worker does, to show the
 * host copes; the product worker sets none.
 */
export interface WorkerHooks {
  /** the engine's jets of one event as the check and the jets file see them */
  engineJets?: (event: number, jets: JetSet) => JetSet;
  /** rewrites one valid event's stage times, stageNs[at .. at + STAGE_COUNT), once measured */
  stageTimes?: (stageNs: Float64Array, at: number, towersClustered: number) => void;
  /** a clusterer of known cost in place of the configured one (a stub for timing tests) */
  clusterer?: () => Clusterer;
  /** runs inside one event's timed clustering (a clusterer without a batch call only) */
  duringService?: (event: number) => void;
}

/** What a worker keeps from batch to batch. */
export interface WorkerState {
  config: WorkerConfig;
  reader: EventTowerReader;
  /** null after a batch failed: it may be poisoned, and is made again for the next batch */
  clusterer: Clusterer | null;
  /** the plain reference, or the reference's pileup chain when pileup steps are on */
  reference: Clusterer | null;
  /** the valid events of the batch being worked on: their towers, flat, and their places */
  batchIndex: Int32Array;
  batchEt: Float64Array;
  batchStart: Int32Array;
  validEvent: Int32Array;
  encodeJets: ((event: number, jets: JetSet | null, clusterNs: number, error: string, eventTowers?: number | null) => Uint8Array) | null;
}

/** Whether event number `event` is in the check sample: a hash of (event, seed), so shards agree. */
export function inCheckSample(event: number, fraction: number, seed: number): boolean {
  if (fraction >= 1) return true;
  if (fraction <= 0) return false;
  // both halves of the event number, hashed with the shared generator's mixer
  return hashToUnit(seed ^ Math.imul(event >>> 0, 0x9e3779b1) ^ Math.imul(Math.floor(event / 4294967296), 0x85ebca6b)) < fraction;
}

function nowNs(): number {
  return performance.now() * 1e6;
}

type ResultViews = ReturnType<typeof resultViews>;

/** The events of one batch and where their results go. */
export interface BatchWork {
  task: BatchTask;
  recordStart: Uint32Array;
  data: Uint8Array;
  out: ResultViews;
  result: BatchResult;
  /** events of the batch that passed validation, in the flat batch of state */
  validCount: number;
}

export function clusterBatch(state: WorkerState, task: BatchTask, hooks: WorkerHooks): BatchResult {
  return finishBatch(state, readBatch(state, task), hooks);
}

/**
 * Pass 1 alone (decode, validate, bin); finishBatch does the rest. An open-loop worker reads
 * an event before it is due and clusters it when it is (open-loop-serve.ts), into its zeroed
 * result slot (`into`, event-results.ts); a batch gets a fresh result buffer.
 */
export function readBatch(state: WorkerState, task: BatchTask, into?: { buffer: SharedArrayBuffer; byteOffset: number }): BatchWork {
  const { count } = task;
  const { recordStart, data } = batchViews(task.buffer, count, task.dataStart);
  const buffer = into ? into.buffer : new ArrayBuffer(resultBytes(count));
  const bufferOffset = into ? into.byteOffset : 0;
  const clusterer = state.clusterer!;
  const result: BatchResult = {
    batchIndex: task.batchIndex, count, engine: clusterer.name, buffer, bufferOffset,
    invalid: [], differences: [], disagreeing: [], sampled: [],
    checked: 0, agreeing: 0, jets: 0,
    towersOffered: 0, towersBelowThreshold: 0, towersOutsideAcceptance: 0,
    jetsBytes: null,
  };
  const work: BatchWork = { task, recordStart, data, out: resultViews(buffer, count, bufferOffset), result, validCount: 0 };
  readEvents(state, work);
  return work;
}

/** Passes 2 and 3 of a batch read by readBatch: cluster, then check (sampled) and encode. */
export function finishBatch(state: WorkerState, work: BatchWork, hooks: WorkerHooks): BatchResult {
  const jetsOf = clusterValidEvents(state, state.clusterer!, work, hooks);
  checkAndEncode(state, work, jetsOf, hooks);
  return work.result;
}

/** Grows a typed array to at least `needed` entries, keeping its contents. */
function grown<T extends Int32Array | Float64Array>(array: T, needed: number): T {
  if (array.length >= needed) return array;
  const bigger = new (array.constructor as { new (n: number): T })(Math.max(needed, 2 * array.length));
  bigger.set(array);
  return bigger;
}

/**
 * Pass 1, per event: decode, validate and bin; valid events' towers are gathered into one flat
 * batch (state.batchIndex/batchEt, valid event v's towers at batchStart[v]..batchStart[v+1]).
 */
function readEvents(state: WorkerState, work: BatchWork): void {
  const { out, result, recordStart, data } = work;
  const { reader, validEvent } = state;
  const threshold = state.config.settings.threshold;
  let valid = 0;
  state.batchStart[0] = 0;
  for (let k = 0; k < work.task.count; k++) {
    const at = k * STAGE_COUNT;
    const t0 = nowNs();
    const broken = reader.decode(data.subarray(recordStart[k], recordStart[k + 1]));
    const t1 = nowNs();
    const towers = broken ?? reader.validate();
    out.eventNumber[k] = towers.event ?? -1;
    if (towers.ok) {
      const { towerIndex, towerEt } = towers;
      let clustered = 0;
      for (let t = 0; t < towerEt.length; t++) {
        const et = towerEt[t];
        if (et > threshold && et >= MIN_ET) clustered++;
      }
      result.towersOffered += towerEt.length;
      result.towersBelowThreshold += towerEt.length - clustered;
      result.towersOutsideAcceptance += towers.outsideAcceptance;
      out.towersClustered[k] = clustered;
      const from = state.batchStart[valid];
      const to = from + towerIndex.length;
      state.batchIndex = grown(state.batchIndex, to);
      state.batchEt = grown(state.batchEt, to);
      state.batchIndex.set(towerIndex, from);
      state.batchEt.set(towerEt, from);
      validEvent[valid++] = k;
      state.batchStart[valid] = to;
      out.status[k] = STATUS_OK;
    } else {
      out.status[k] = STATUS_INVALID;
      result.invalid.push({ index: k, reason: towers.problem });
    }
    out.stageNs[at + STAGE_DECODE] = t1 - t0;
    out.stageNs[at + STAGE_BIN] = nowNs() - t1;
  }
  work.validCount = valid;
}

/** A clusterer that takes a whole batch per call (the wasm engine, clustering/engine.ts). */
interface BatchClusterer extends Clusterer {
  clusterBatch(eventCount: number, towerStart: Int32Array, towerIndex: Int32Array, towerEt: Float64Array, withTowers: boolean): BatchJets;
  /** the same into arrays the clusterer keeps, valid until its next call */
  clusterBatchReusing?(eventCount: number, towerStart: Int32Array, towerIndex: Int32Array, towerEt: Float64Array, withTowers: boolean): BatchJets;
}

function hasBatchApi(clusterer: Clusterer): clusterer is BatchClusterer {
  return typeof (clusterer as Partial<BatchClusterer>).clusterBatch === 'function';
}

/**
 * Pass 2: clusters the valid events, one engine call for the whole batch. Returns the jets of
 * valid event v; a JetSet view is made only for events that are checked or written.
 */
function clusterValidEvents(state: WorkerState, clusterer: Clusterer, work: BatchWork, hooks: WorkerHooks): (v: number) => JetSet {
  const { out, result } = work;
  const { validEvent, batchStart } = state;
  const valid = work.validCount;
  const withTowers = state.reference !== null || state.encodeJets !== null;
  let jetsOf: (v: number) => JetSet;
  if (hasBatchApi(clusterer)) {
    // the engine's own result arrays, which live until its next call, long enough for this
    // batch's check and encode: no fresh arrays per batch (~2.6 MB for 32 pileup-200 events)
    const batch = clusterer.clusterBatchReusing
      ? clusterer.clusterBatchReusing(valid, batchStart, state.batchIndex, state.batchEt, withTowers)
      : clusterer.clusterBatch(valid, batchStart, state.batchIndex, state.batchEt, withTowers);
    for (let v = 0; v < valid; v++) {
      if (batch.status[v] !== 0) throw new Error(`engine refused event ${out.eventNumber[validEvent[v]]} that passed validation (status ${batch.status[v]})`);
      out.stageNs[validEvent[v] * STAGE_COUNT + STAGE_CLUSTER] = batch.clusterNs[v];
    }
    result.jets = batch.jetStart[valid] - batch.jetStart[0];
    jetsOf = (v) => batchEventJets(batch, v);
  } else {
    const sets: JetSet[] = [];
    for (let v = 0; v < valid; v++) {
      const t2 = nowNs();
      hooks.duringService?.(out.eventNumber[validEvent[v]]);
      const jets = clusterer.cluster(state.batchIndex.subarray(batchStart[v], batchStart[v + 1]), state.batchEt.subarray(batchStart[v], batchStart[v + 1]));
      out.stageNs[validEvent[v] * STAGE_COUNT + STAGE_CLUSTER] = nowNs() - t2;
      // grooming wraps the (pileup) clusterer: its time is a stage of its own inside cluster
      const chain = clusterer instanceof GroomingClusterer ? clusterer.base : clusterer;
      if (chain instanceof EnginePileupClusterer) {
        const at = validEvent[v] * STAGE_COUNT + STAGE_PILEUP_FIRST;
        for (let stage = 0; stage < PILEUP_STAGE_COUNT; stage++) out.stageNs[at + stage] = chain.stageNs[stage];
      }
      if (clusterer instanceof GroomingClusterer) out.stageNs[validEvent[v] * STAGE_COUNT + STAGE_GROOM] = clusterer.groomNs;
      result.jets += jets.count;
      sets.push(jets);
    }
    jetsOf = (v) => sets[v];
  }
  const engineJets = hooks.engineJets;
  if (!engineJets) return jetsOf;
  const clusteredJetsOf = jetsOf;
  return (v) => engineJets(out.eventNumber[validEvent[v]], clusteredJetsOf(v));
}

/**
 * Pass 3, per event in input order: check (sampled) and encode; invalid events keep their
 * place in the jets file as records with the error text.
 */
function checkAndEncode(state: WorkerState, work: BatchWork, jetsOf: (v: number) => JetSet, hooks: WorkerHooks): void {
  const { out, result, recordStart, data } = work;
  const { config, reference, encodeJets, batchStart } = state;
  const jetChunks: Uint8Array[] = [];
  let nextInvalid = 0; // invalid entries are in input order
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
    const slot = v++;
    const t3 = nowNs();
    let t4 = t3;
    if (config.checkApart && inCheckSample(event, config.checkFraction, config.checkSeed)) {
      // the reference runs after the timed pass, in its own workers (check-pass.ts)
      result.sampled.push({ index: k, event, bytes: data.slice(recordStart[k], recordStart[k + 1]) });
    } else if (reference && inCheckSample(event, config.checkFraction, config.checkSeed)) {
      const expected = reference.cluster(state.batchIndex.subarray(from, to), state.batchEt.subarray(from, to));
      const difference = firstJetDifference(jetsOf(slot), expected) ?? pileupDifference(jetsOf(slot), expected) ?? firstGroomingDifference(jetsOf(slot), expected);
      result.checked++;
      if (difference === null) result.agreeing++;
      else {
        result.differences.push({ event, ...difference });
        result.disagreeing.push({ event, bytes: data.slice(recordStart[k], recordStart[k + 1]) });
      }
      t4 = nowNs();
    }
    let t5 = t4;
    if (encodeJets) {
      jetChunks.push(encodeJets(event, jetsOf(slot), Math.round(out.stageNs[at + STAGE_CLUSTER]), '', out.towersClustered[k]));
      t5 = nowNs();
    }
    out.stageNs[at + STAGE_CHECK] = t4 - t3;
    out.stageNs[at + STAGE_ENCODE] = t5 - t4;
    hooks.stageTimes?.(out.stageNs, at, out.towersClustered[k]);
  }
  if (encodeJets) result.jetsBytes = joined(jetChunks);
}

/** the first difference of the pileup values (spec part two), as a jet difference for the summary */
function pileupDifference(engine: JetSet, reference: JetSet): ReturnType<typeof firstJetDifference> {
  const difference = firstPileupDifference(engine, reference);
  if (difference === null) return null;
  // a per-event value is named on jet 0 with an "event." field, so that the line says which
  return { ...difference, jet: difference.jet ?? 0, field: difference.jet === null ? `event.${difference.field}` : difference.field };
}

/** the chunks end to end in one array (a batch's jets records) */
export function joined(chunks: Uint8Array[]): Uint8Array {
  let total = 0;
  for (const chunk of chunks) total += chunk.length;
  const bytes = new Uint8Array(total);
  let at = 0;
  for (const chunk of chunks) { bytes.set(chunk, at); at += chunk.length; }
  return bytes;
}
