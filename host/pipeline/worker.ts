// One pool worker (a piscina worker thread; runs from compiled dist/ JS). It owns its
// clusterer instance, its reference (for --check), its decoder and scratch, all made once on
// the first batch. Per event of a batch:
//   decode the record -> validate and bin the towers -> cluster -> check (sampled) -> encode
// and each stage's time goes into the batch's per-event stage table. Per-event faults of the
// data (bad wire format, invalid towers) make that event invalid; a fault of the worker
// itself (a throw, a wasm trap, an out-of-memory) fails the whole batch: the host marks its
// events failed, and this worker drops its clusterer, which may be poisoned, and builds a new
// one on the next batch. A worker thread that dies is replaced by the pool.
//
// Batch layout (host -> worker, one transferred ArrayBuffer, see pool.ts):
//   Float64 recordOffset[count]  |  Uint32 recordStart[count + 1]  |  pad to 8  |  record bytes
// Result layout (worker -> host, one transferred ArrayBuffer):
//   Float64 eventNumber[count] | Float64 stageNs[count * STAGE_COUNT] (event-major) |
//   Int32 towersClustered[count] | Uint8 status[count] (0 ok, 1 invalid)
// plus small plain fields (invalid events' reasons, check differences, jets bytes).

import { move, transferableSymbol, valueSymbol, workerData as piscinaWorkerData } from 'piscina';
import { EventRecordDecoder } from '../formats/event-codec.js';
import { binDeposits, findInvalidTower, makeGridTables, MIN_ET, type GridTables } from '../clustering/grid.js';
import { ReferenceClusterer } from '../clustering/reference.js';
import { firstJetDifference, type JetDifference } from '../validate/bit-exact.js';
import type { ClusterSettings, Clusterer, Grid, JetSet } from '../types.js';
import { batchEventJets, WasmClusterer, type BatchJets } from '../clustering/engine.js';
import { encodeDelimitedJetsRecord } from '../formats/jets-codec.js';
import { hashToUnit } from '../random.js';

export const STAGE_COUNT = 5; // decode, bin, cluster, check, encode (summary.ts STAGES)
export const STATUS_OK = 0;
export const STATUS_INVALID = 1;

export interface WorkerConfig {
  grid: Grid;
  settings: ClusterSettings;
  /** 'wasm' (the engine) or 'reference'; never swapped silently for the other */
  engine: 'wasm' | 'reference';
  /** fraction of events compared with the reference: 1 all, 0 none */
  checkFraction: number;
  checkSeed: number;
  /** encode each event's jets for a jets file */
  encodeJets: boolean;
}

export interface BatchTask {
  batchIndex: number;
  count: number;
  dataStart: number;
  buffer: ArrayBuffer;
  /** an empty batch that warms the engine up (pool start) */
  warmUp?: boolean;
}

export interface InvalidEntry {
  index: number;
  reason: string;
}

export interface BatchResult {
  batchIndex: number;
  count: number;
  engine: string;
  buffer: ArrayBuffer;
  invalid: InvalidEntry[];
  differences: (JetDifference & { event: number })[];
  /** the record bytes of each disagreeing event, for a repro file */
  disagreeing: { event: number; bytes: Uint8Array }[];
  checked: number;
  agreeing: number;
  jets: number;
  towersOffered: number;
  towersBelowThreshold: number;
  towersOutsideAcceptance: number;
  /** delimited jets records of this batch's events in order, when encodeJets is on */
  jetsBytes: Uint8Array | null;
}

/** Views into a result buffer (used by the worker to fill it and by the host to read it). */
export function resultViews(buffer: ArrayBuffer, count: number) {
  let at = 0;
  const eventNumber = new Float64Array(buffer, at, count); at += 8 * count;
  const stageNs = new Float64Array(buffer, at, count * STAGE_COUNT); at += 8 * count * STAGE_COUNT;
  const towersClustered = new Int32Array(buffer, at, count); at += 4 * count;
  const status = new Uint8Array(buffer, at, count);
  return { eventNumber, stageNs, towersClustered, status };
}

export function resultBytes(count: number): number {
  return 8 * count + 8 * count * STAGE_COUNT + 4 * count + count;
}

/** Views into a batch buffer. */
export function batchViews(buffer: ArrayBuffer, count: number, dataStart: number) {
  const recordOffset = new Float64Array(buffer, 0, count);
  const recordStart = new Uint32Array(buffer, 8 * count, count + 1);
  const data = new Uint8Array(buffer, dataStart);
  return { recordOffset, recordStart, data };
}

/** Whether event number `event` is in the check sample: a hash of (event, seed), so shards agree. */
export function inCheckSample(event: number, fraction: number, seed: number): boolean {
  if (fraction >= 1) return true;
  if (fraction <= 0) return false;
  // both halves of the event number, hashed with the shared generator's mixer
  return hashToUnit(seed ^ Math.imul(event >>> 0, 0x9e3779b1) ^ Math.imul(Math.floor(event / 4294967296), 0x85ebca6b)) < fraction;
}

// ---- test-only switches (environment): plant faults to show the host copes -----------------
//   JETLAG_TEST_FAULT=throw:B   batch B throws inside the worker
//   JETLAG_TEST_FAULT=exit:B    the worker thread exits while running batch B
//   JETLAG_TEST_FAULT=stall:B:MS  batch B sleeps MS milliseconds before it starts
//   JETLAG_TEST_PERTURB_EVENT=E  the engine's first jet of event E gets its pt one ulp higher,
//                                so the check has a disagreement to find
//   JETLAG_TEST_SYNTHETIC_TIMES=1  stage times are a fixed function of the event, not measured,
//                                  so two runs over the same events record identical values
interface PlantedFault { kind: 'throw' | 'exit' | 'stall'; batch: number; ms: number }
function plantedFault(): PlantedFault | null {
  const text = process.env.JETLAG_TEST_FAULT;
  if (!text) return null;
  const [kind, batch, ms] = text.split(':');
  if (kind !== 'throw' && kind !== 'exit' && kind !== 'stall') return null;
  return { kind, batch: Number(batch), ms: Number(ms ?? 0) };
}
const FAULT = plantedFault();
const SYNTHETIC_TIMES = process.env.JETLAG_TEST_SYNTHETIC_TIMES === '1';
const PERTURB_EVENT = process.env.JETLAG_TEST_PERTURB_EVENT === undefined ? -1 : Number(process.env.JETLAG_TEST_PERTURB_EVENT);

/** The jets with the first jet's pt moved up by one ulp (test switch above). */
function perturbed(jets: JetSet): JetSet {
  if (jets.count === 0) return jets;
  const pt = Float64Array.from(jets.pt);
  const bits = new BigInt64Array(pt.buffer, 0, 1);
  bits[0] += 1n;
  return { ...jets, pt };
}

// ---- per-worker state, made on the first batch ------------------------------------------
interface WorkerState {
  config: WorkerConfig;
  tables: GridTables;
  clusterer: Clusterer | null;
  reference: ReferenceClusterer | null;
  decoder: EventRecordDecoder;
  seen: Uint8Array;
  /** the valid events of the batch being worked on: their towers, flat, and their places */
  batchIndex: Int32Array;
  batchEt: Float64Array;
  batchStart: Int32Array;
  validEvent: Int32Array;
  encodeJets: ((event: number, jets: JetSet | null, clusterNs: number, error: string) => Uint8Array) | null;
}

let state: WorkerState | null = null;

function makeClusterer(config: WorkerConfig): Clusterer {
  if (config.engine === 'reference') return new ReferenceClusterer(config.grid, config.settings);
  return new WasmClusterer(config.grid, config.settings);
}

function makeState(config: WorkerConfig): WorkerState {
  const tables = makeGridTables(config.grid);
  const encodeJets = config.encodeJets ? encodeDelimitedJetsRecord : null;
  return {
    config,
    tables,
    clusterer: makeClusterer(config),
    reference: config.checkFraction > 0 ? new ReferenceClusterer(config.grid, config.settings) : null,
    decoder: new EventRecordDecoder(),
    seen: new Uint8Array(tables.towerTotal),
    batchIndex: new Int32Array(1 << 16),
    batchEt: new Float64Array(1 << 16),
    batchStart: new Int32Array(1),
    validEvent: new Int32Array(0),
    encodeJets,
  };
}

function nowNs(): number {
  return performance.now() * 1e6;
}

function sleep(ms: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, ms));
}

/** piscina entry: one batch in, one result out (both buffers transferred). */
export default async function runBatch(task: BatchTask): Promise<unknown> {
  if (FAULT && FAULT.batch === task.batchIndex) {
    if (FAULT.kind === 'throw') throw new Error(`planted fault in batch ${task.batchIndex}`);
    if (FAULT.kind === 'exit') process.exit(3);
    if (FAULT.kind === 'stall') await sleep(FAULT.ms);
  }
  if (!state) state = makeState(piscinaWorkerData as WorkerConfig);
  if (!state.clusterer) state.clusterer = makeClusterer(state.config);
  if (state.validEvent.length < task.count) {
    state.validEvent = new Int32Array(task.count);
    state.batchStart = new Int32Array(task.count + 1);
  }
  if (task.count === 0) {
    if (task.warmUp) warmUp(state);
    return null;
  }
  try {
    const result = clusterBatch(state, task);
    return move({
      get [transferableSymbol]() { return result.jetsBytes ? [result.buffer, result.jetsBytes.buffer] : [result.buffer]; },
      get [valueSymbol]() { return result; },
    } as unknown as ArrayBuffer);
  } catch (error) {
    // the clusterer may be poisoned (a wasm trap leaves its memory in an unknown state)
    state.clusterer = null;
    throw error;
  }
}

/** synthetic warm-up events: towers on every third cell, energies from a fixed sequence */
const WARM_UP_CALLS = 30;
const WARM_UP_TOWERS = 1100;
const WARM_UP_TOWERS_REFERENCE = 200;

/**
 * Runs the clusterer on synthetic events so the JIT has compiled its hot code before timing
 * starts (the host sends one empty batch per worker first): trigger latency is read in the
 * steady state, not on the first events of a cold engine.
 */
function warmUp(s: WorkerState): void {
  // bounded, so start-up does not grow with the grid (a 512 x 512 grid took 44 s unbounded);
  // a third of the default grid's towers, a typical pileup event; the O(N^2) reference less
  const limit = s.clusterer instanceof ReferenceClusterer ? WARM_UP_TOWERS_REFERENCE : WARM_UP_TOWERS;
  const towers = Math.max(1, Math.min(limit, Math.floor(s.tables.towerTotal / 3)));
  const towerIndex = new Int32Array(towers);
  const towerEt = new Float64Array(towers);
  let x = 12345;
  for (let k = 0; k < towers; k++) {
    towerIndex[k] = 3 * k;
    x = (Math.imul(x, 1103515245) + 12345) >>> 0;
    towerEt[k] = 0.05 + (x / 4294967296) * (k % 97 === 0 ? 200 : 2);
  }
  for (let call = 0; call < WARM_UP_CALLS; call++) s.clusterer!.cluster(towerIndex, towerEt);
  s.reference?.cluster(towerIndex.subarray(0, 200), towerEt.subarray(0, 200));
}

/** A clusterer that takes a whole batch per call (the wasm engine, host/engine.ts). */
interface BatchClusterer extends Clusterer {
  clusterBatch(eventCount: number, towerStart: Int32Array, towerIndex: Int32Array, towerEt: Float64Array, withTowers: boolean): BatchJets;
}

function hasBatchApi(clusterer: Clusterer): clusterer is BatchClusterer {
  return typeof (clusterer as Partial<BatchClusterer>).clusterBatch === 'function';
}

/** Grows a typed array to at least `needed` entries, keeping its contents. */
function grown<T extends Int32Array | Float64Array>(array: T, needed: number): T {
  if (array.length >= needed) return array;
  const bigger = new (array.constructor as { new (n: number): T })(Math.max(needed, 2 * array.length));
  bigger.set(array);
  return bigger;
}

function clusterBatch(s: WorkerState, task: BatchTask): BatchResult {
  const { count } = task;
  const { recordStart, data } = batchViews(task.buffer, count, task.dataStart);
  const buffer = new ArrayBuffer(resultBytes(count));
  const out = resultViews(buffer, count);
  const { config, tables, decoder, seen } = s;
  const clusterer = s.clusterer!;
  const threshold = config.settings.threshold;
  const invalid: InvalidEntry[] = [];
  const differences: BatchResult['differences'] = [];
  const disagreeing: BatchResult['disagreeing'] = [];
  const jetChunks: Uint8Array[] = [];
  let checked = 0;
  let agreeing = 0;
  let jetsTotal = 0;
  let towersOffered = 0;
  let towersBelowThreshold = 0;
  let towersOutsideAcceptance = 0;

  // phase 1, per event: decode, validate and bin; valid events' towers are gathered into one
  // flat batch (s.batchIndex/s.batchEt, event v's towers at batchStart[v]..batchStart[v+1])
  const validEvent = s.validEvent;
  let valid = 0;
  s.batchStart[0] = 0;
  for (let k = 0; k < count; k++) {
    const stage = k * STAGE_COUNT;
    const t0 = nowNs();
    let problem: string | null = null;
    let event = -1;
    try {
      decoder.decode(data.subarray(recordStart[k], recordStart[k + 1]));
      event = decoder.event;
    } catch (error) {
      if (decoder.hasEvent) event = decoder.event;
      problem = `bad event record: ${(error as Error).message}`;
    }
    const t1 = nowNs();

    // validate and bin: the rules and texts of event-towers.ts, split here so that decode and
    // bin are timed apart
    let towerIndex: Int32Array | null = null;
    let towerEt: Float64Array | null = null;
    if (problem === null) {
      if (decoder.error !== '') problem = decoder.error;
      else if (decoder.depositEtaCount > 0 || decoder.depositPhiCount > 0 || decoder.depositEtCount > 0) {
        if (decoder.towerIndexCount > 0 || decoder.towerEtCount > 0) problem = 'the record holds both towers and raw deposits';
        else {
          const binned = binDeposits(tables,
            decoder.depositEta.subarray(0, decoder.depositEtaCount),
            decoder.depositPhi.subarray(0, decoder.depositPhiCount),
            decoder.depositEt.subarray(0, decoder.depositEtCount));
          problem = binned.problem;
          towerIndex = binned.towerIndex;
          towerEt = binned.towerEt;
          towersOutsideAcceptance += binned.outsideAcceptance;
        }
      } else if (decoder.towerIndexCount !== decoder.towerEtCount) {
        problem = `tower_index has ${decoder.towerIndexCount} entries but tower_et has ${decoder.towerEtCount}`;
      } else {
        towerIndex = decoder.towerIndex.subarray(0, decoder.towerIndexCount);
        towerEt = decoder.towerEt.subarray(0, decoder.towerEtCount);
        problem = findInvalidTower(tables, towerIndex, towerEt, seen);
      }
    }
    out.eventNumber[k] = event;
    if (problem === null) {
      let clustered = 0;
      for (let t = 0; t < towerEt!.length; t++) {
        const et = towerEt![t];
        if (et > threshold && et >= MIN_ET) clustered++;
      }
      towersOffered += towerEt!.length;
      towersBelowThreshold += towerEt!.length - clustered;
      out.towersClustered[k] = clustered;
      const from = s.batchStart[valid];
      const to = from + towerIndex!.length;
      s.batchIndex = grown(s.batchIndex, to);
      s.batchEt = grown(s.batchEt, to);
      s.batchIndex.set(towerIndex!, from);
      s.batchEt.set(towerEt!, from);
      validEvent[valid++] = k;
      s.batchStart[valid] = to;
      out.status[k] = STATUS_OK;
    } else {
      out.status[k] = STATUS_INVALID;
      invalid.push({ index: k, reason: problem });
    }
    out.stageNs[stage] = t1 - t0;
    out.stageNs[stage + 1] = nowNs() - t1;
  }

  // phase 2: cluster the valid events, one engine call for the whole batch
  const withTowers = s.reference !== null || s.encodeJets !== null;
  // (a JetSet view per event is made only for events that are checked or written)
  let jetsOf: (v: number) => JetSet;
  if (hasBatchApi(clusterer)) {
    const batch = clusterer.clusterBatch(valid, s.batchStart, s.batchIndex, s.batchEt, withTowers);
    for (let v = 0; v < valid; v++) {
      if (batch.status[v] !== 0) throw new Error(`engine refused event ${out.eventNumber[validEvent[v]]} that passed validation (status ${batch.status[v]})`);
      out.stageNs[validEvent[v] * STAGE_COUNT + 2] = batch.clusterNs[v];
    }
    jetsTotal = batch.jetStart[valid] - batch.jetStart[0];
    jetsOf = (v) => batchEventJets(batch, v);
    if (PERTURB_EVENT >= 0) jetsOf = (v) => (out.eventNumber[validEvent[v]] === PERTURB_EVENT ? perturbed(batchEventJets(batch, v)) : batchEventJets(batch, v));
  } else {
    const sets: JetSet[] = [];
    for (let v = 0; v < valid; v++) {
      const t2 = nowNs();
      const jets = clusterer.cluster(s.batchIndex.subarray(s.batchStart[v], s.batchStart[v + 1]), s.batchEt.subarray(s.batchStart[v], s.batchStart[v + 1]));
      out.stageNs[validEvent[v] * STAGE_COUNT + 2] = nowNs() - t2;
      jetsTotal += jets.count;
      sets.push(jets);
    }
    jetsOf = (v) => sets[v];
  }

  // phase 3, per event in input order: check (sampled), encode; invalid events keep their
  // place in the jets file as records with the error text
  let v = 0;
  for (let k = 0; k < count; k++) {
    const stage = k * STAGE_COUNT;
    const event = out.eventNumber[k];
    if (out.status[k] !== STATUS_OK) {
      if (s.encodeJets && event >= 0) jetChunks.push(s.encodeJets(event, null, 0, invalid.find((e) => e.index === k)!.reason));
      continue;
    }
    const from = s.batchStart[v];
    const to = s.batchStart[v + 1];
    const slot = v++;
    const t3 = nowNs();
    let t4 = t3;
    if (s.reference && inCheckSample(event, config.checkFraction, config.checkSeed)) {
      const reference = s.reference.cluster(s.batchIndex.subarray(from, to), s.batchEt.subarray(from, to));
      const difference = firstJetDifference(jetsOf(slot), reference);
      checked++;
      if (difference === null) agreeing++;
      else {
        differences.push({ event, ...difference });
        disagreeing.push({ event, bytes: data.slice(recordStart[k], recordStart[k + 1]) });
      }
      t4 = nowNs();
    }
    let t5 = t4;
    if (s.encodeJets) {
      jetChunks.push(s.encodeJets(event, jetsOf(slot), Math.round(out.stageNs[stage + 2]), ''));
      t5 = nowNs();
    }
    if (SYNTHETIC_TIMES) {
      // a fixed function of the event: decode 1 µs, bin 2 µs, cluster 50 ns per tower + 1 µs
      out.stageNs[stage] = 1000;
      out.stageNs[stage + 1] = 2000;
      out.stageNs[stage + 2] = 1000 + 50 * out.towersClustered[k];
      out.stageNs[stage + 3] = t4 > t3 ? 500 : 0;
      out.stageNs[stage + 4] = t5 > t4 ? 300 : 0;
    } else {
      out.stageNs[stage + 3] = t4 - t3;
      out.stageNs[stage + 4] = t5 - t4;
    }
  }

  let jetsBytes: Uint8Array | null = null;
  if (s.encodeJets) {
    let total = 0;
    for (const chunk of jetChunks) total += chunk.length;
    jetsBytes = new Uint8Array(total);
    let at = 0;
    for (const chunk of jetChunks) { jetsBytes.set(chunk, at); at += chunk.length; }
  }
  return {
    batchIndex: task.batchIndex,
    count,
    engine: clusterer.name,
    buffer,
    invalid,
    differences,
    disagreeing,
    checked,
    agreeing,
    jets: jetsTotal,
    towersOffered,
    towersBelowThreshold,
    towersOutsideAcceptance,
    jetsBytes,
  };
}
