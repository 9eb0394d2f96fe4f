// One pool worker (a piscina worker thread; runs from compiled dist/ JS). It owns its
// clusterer instance, its reference (for --check), its event-tower reader and scratch, all made
// once on the first batch. Per event of a batch (cluster-batch.ts):
//   decode the record -> validate and bin the towers -> cluster -> check (sampled) -> encode
// and each stage's time goes into the batch's per-event stage table. Per-event faults of the
// data (bad wire format, invalid towers) make that event invalid; a fault of the worker
// itself (a throw, a wasm trap, an out-of-memory) fails the whole batch: the host marks its
// events failed, and this worker drops its clusterer, which may be poisoned, and builds a new
// one on the next batch. A worker thread that dies is replaced by the pool.
// What comes in and goes out, and the buffers' layouts: worker-contract.ts.

import { move, transferableSymbol, valueSymbol, workerData as piscinaWorkerData } from 'piscina';
import { makeClusterer, makeReferenceClusterer } from '../clustering/clusterers.js';
import { ReferenceClusterer } from '../clustering/reference.js';
import { PileupReferenceClusterer } from '../clustering/pileup/chain.js';
import { EventTowerReader } from '../input/event-towers.js';
import { encodeDelimitedJetsRecord } from '../formats/jets-codec.js';
import { clusterBatch, type WorkerHooks, type WorkerState } from './cluster-batch.js';
import { serveRing } from './open-loop-serve.js';
import { runExecBatch } from './exec-batch.js';
import { serveRingWithProgram } from './exec-serve.js';
import type { BatchTask, ServeTask, WorkerConfig } from './worker-contract.js';

function makeState(config: WorkerConfig, hooks: WorkerHooks): WorkerState {
  return {
    config,
    reader: new EventTowerReader(config.grid),
    clusterer: hooks.clusterer ? hooks.clusterer() : makeClusterer(config.engine, config.grid, config.settings, null, config.pileup, 'run', config.grooming),
    // a timed pass leaves the reference to the check pass (check-pass.ts)
    reference: config.checkFraction > 0 && !config.checkApart ? makeReferenceClusterer(config.grid, config.settings, config.pileup, 'run', config.grooming) : null,
    batchIndex: new Int32Array(1 << 16),
    batchEt: new Float64Array(1 << 16),
    batchStart: new Int32Array(1),
    validEvent: new Int32Array(0),
    encodeJets: config.encodeJets ? encodeDelimitedJetsRecord : null,
  };
}

/**
 * The piscina entry: one batch in, one result out (both buffers transferred). `hooks` are for
 * a test worker only (cluster-batch.ts WorkerHooks).
 */
export function makeBatchRunner(hooks: WorkerHooks = {}): (task: BatchTask) => Promise<unknown> {
  let state: WorkerState | null = null;
  const ensureClusterer = (s: WorkerState) => {
    if (!s.clusterer) s.clusterer = hooks.clusterer ? hooks.clusterer() : makeClusterer(s.config.engine, s.config.grid, s.config.settings, null, s.config.pileup, 'run', s.config.grooming);
  };
  return async function runBatch(task: BatchTask | ServeTask): Promise<unknown> {
    const config = piscinaWorkerData as WorkerConfig;
    if (config.exec) return 'serve' in task ? serveRingWithProgram(config, config.exec, task.serve) : runExecBatch(config, config.exec, task);
    if (!state) state = makeState(piscinaWorkerData as WorkerConfig, hooks);
    if ('serve' in task) return serveRing(state, task.serve, hooks, ensureClusterer);
    ensureClusterer(state);
    if (state.validEvent.length < task.count) {
      state.validEvent = new Int32Array(task.count);
      state.batchStart = new Int32Array(task.count + 1);
    }
    if (task.count === 0) {
      if (task.warmUp) warmUp(state);
      return null;
    }
    try {
      const result = clusterBatch(state, task, hooks);
      // the records' buffer goes back too, for the host to refill (nothing here keeps a view of it)
      result.inputBuffer = task.buffer;
      return move({
        get [transferableSymbol]() { return result.jetsBytes ? [result.buffer, task.buffer, result.jetsBytes.buffer] : [result.buffer, task.buffer]; },
        get [valueSymbol]() { return result; },
      } as unknown as ArrayBuffer);
    } catch (error) {
      // the clusterer may be poisoned (a wasm trap leaves its memory in an unknown state)
      state.clusterer = null;
      throw error;
    }
  };
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
function warmUp(state: WorkerState): void {
  // bounded, so start-up does not grow with the grid (a 512 x 512 grid took 44 s unbounded);
  // a third of the default grid's towers, a typical pileup event; the O(N^2) reference less
  const limit = state.clusterer instanceof ReferenceClusterer ? WARM_UP_TOWERS_REFERENCE : WARM_UP_TOWERS;
  const towers = Math.max(1, Math.min(limit, Math.floor(state.reader.tables.towerTotal / 3)));
  const towerIndex = new Int32Array(towers);
  const towerEt = new Float64Array(towers);
  let x = 12345;
  for (let k = 0; k < towers; k++) {
    towerIndex[k] = 3 * k;
    x = (Math.imul(x, 1103515245) + 12345) >>> 0;
    towerEt[k] = 0.05 + (x / 4294967296) * (k % 97 === 0 ? 200 : 2);
  }
  // the reference's pileup chain clusters a full ghost grid, about a second a call
  const calls = state.clusterer instanceof PileupReferenceClusterer ? 1 : WARM_UP_CALLS;
  for (let call = 0; call < calls; call++) state.clusterer!.cluster(towerIndex, towerEt);
  state.reference?.cluster(towerIndex.subarray(0, 200), towerEt.subarray(0, 200));
}

export default makeBatchRunner();
