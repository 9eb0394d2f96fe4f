// A pool worker with planted faults, to show the host copes. It is the product worker plus the
// switches below, read from the environment when the thread starts; tests hand its compiled
// file (dist/tests/support/fault-worker.js, built by `npm run build:host`) to runEvents or
// BatchPool as their workerFile.
//   JETLAG_TEST_FAULT=throw:B     batch B throws inside the worker
//   JETLAG_TEST_FAULT=exit:B      the worker thread exits while running batch B
//   JETLAG_TEST_FAULT=stall:B:MS  batch B sleeps MS milliseconds before it starts
//   JETLAG_TEST_PERTURB_EVENT=E   the engine's first jet of event E gets its pt one ulp higher,
//                                 so the check has a disagreement to find
//   JETLAG_TEST_PERTURB_RHO=E     event E's rho one ulp higher (its jets as they were), so the
//                                 check of the pileup values has a disagreement to find
//   JETLAG_TEST_SYNTHETIC_TIMES=1 stage times are a fixed function of the event, not measured,
//                                 so two runs over the same events record identical values
//   JETLAG_TEST_STUB_US=US        a stub clusterer of known cost in place of the engine: it spins
//                                 US µs per event and finds no jets (service time = US)
//   JETLAG_TEST_KILL=PERMILLE:SEED the thread exits part way through the batches that
//                                 kill-points.ts picks (about PERMILLE in 1000): random points
//                                 of a run, but the same ones every time
//   JETLAG_TEST_STUB_SLEEP_US=US  a stub clusterer that sleeps US µs per event (Atomics.wait): a
//                                 known cost in wall time that leaves the cores to the harness
//   JETLAG_TEST_STUB_SCALING=NS:EXPONENT a stub clusterer whose cost grows with the event's
//                                 towers: it spins NS·N^EXPONENT ns, N the towers that enter
//                                 clustering (et above the threshold, spec section 1)
//   JETLAG_TEST_STUB_NOMINAL=1    with JETLAG_TEST_STUB_SCALING: the stub does not spin, and each
//                                 event's clustering time is its nominal cost c·N^EXPONENT, so a
//                                 busy machine cannot bend the times
//   JETLAG_TEST_STUB_STALL=E:MS   event number E sleeps MS ms inside its timed clustering, once
//                                 per worker thread (a stalled worker)
//   JETLAG_TEST_SERVE_DELAY_MS=MS an open-loop serve task sleeps MS ms before it takes its seat
//                                 at the ring (a worker slow to start)

import { makeBatchRunner } from '../../host/pipeline/worker.js';
import { killsBatch, killSlot } from './kill-points.js';
import type { WorkerHooks } from '../../host/pipeline/cluster-batch.js';
import { STAGE_BIN, STAGE_CHECK, STAGE_CLUSTER, STAGE_DECODE, STAGE_ENCODE, type BatchTask } from '../../host/pipeline/worker-contract.js';
import { emptyJetSet } from '../../host/formats/jets-codec.js';
import { MIN_ET } from '../../host/clustering/grid.js';
import { DEFAULT_SETTINGS, type Clusterer, type JetSet } from '../../host/types.js';

interface PlantedFault { kind: 'throw' | 'exit' | 'stall'; batch: number; ms: number }

function plantedFault(): PlantedFault | null {
  const text = process.env.JETLAG_TEST_FAULT;
  if (!text) return null;
  const [kind, batch, ms] = text.split(':');
  if (kind !== 'throw' && kind !== 'exit' && kind !== 'stall') return null;
  return { kind, batch: Number(batch), ms: Number(ms ?? 0) };
}

/** The jets with the first jet's pt moved up by one ulp. */
function perturbed(jets: JetSet): JetSet {
  if (jets.count === 0) return jets;
  const pt = Float64Array.from(jets.pt);
  const bits = new BigInt64Array(pt.buffer, 0, 1);
  bits[0] += 1n;
  return { ...jets, pt };
}

function hooksFromEnvironment(): WorkerHooks {
  const hooks: WorkerHooks = {};
  const perturbEvent = process.env.JETLAG_TEST_PERTURB_EVENT;
  if (perturbEvent !== undefined) {
    const event = Number(perturbEvent);
    hooks.engineJets = (eventNumber, jets) => (eventNumber === event ? perturbed(jets) : jets);
  }
  if (process.env.JETLAG_TEST_SYNTHETIC_TIMES === '1') {
    // decode 1 µs, bin 2 µs, cluster 50 ns per tower + 1 µs; check and encode only if they ran
    hooks.stageTimes = (stageNs, at, towersClustered) => {
      stageNs[at + STAGE_DECODE] = 1000;
      stageNs[at + STAGE_BIN] = 2000;
      stageNs[at + STAGE_CLUSTER] = 1000 + 50 * towersClustered;
      stageNs[at + STAGE_CHECK] = stageNs[at + STAGE_CHECK] > 0 ? 500 : 0;
      stageNs[at + STAGE_ENCODE] = stageNs[at + STAGE_ENCODE] > 0 ? 300 : 0;
    };
  }
  const perturbRho = process.env.JETLAG_TEST_PERTURB_RHO;
  if (perturbRho !== undefined) {
    const event = Number(perturbRho);
    const before = hooks.engineJets;
    hooks.engineJets = (eventNumber, jets) => {
      const out = before ? before(eventNumber, jets) : jets;
      if (eventNumber !== event || !out.pileup) return out;
      const rho = new Float64Array([out.pileup.rho]);
      new BigInt64Array(rho.buffer)[0] += 1n;
      return { ...out, pileup: { ...out.pileup, rho: rho[0] } };
    };
  }
  const stubUs = process.env.JETLAG_TEST_STUB_US;
  if (stubUs !== undefined) hooks.clusterer = () => spinningClusterer(Number(stubUs));
  const stubSleepUs = process.env.JETLAG_TEST_STUB_SLEEP_US;
  if (stubSleepUs !== undefined) hooks.clusterer = () => sleepingClusterer(Number(stubSleepUs));
  const stubScaling = process.env.JETLAG_TEST_STUB_SCALING;
  if (stubScaling !== undefined) {
    const [coefficientNs, exponent] = stubScaling.split(':').map(Number);
    const nominal = process.env.JETLAG_TEST_STUB_NOMINAL === '1';
    hooks.clusterer = () => scalingClusterer(coefficientNs, exponent, nominal);
    // the cost of the N the run tallies (towers that entered clustering), which is the N the
    // stub counts; set once per event served, so the pool's warm-up calls leave no trace
    if (nominal) hooks.stageTimes = (stageNs, at, towersClustered) => { stageNs[at + STAGE_CLUSTER] = coefficientNs * towersClustered ** exponent; };
  }
  const stall = process.env.JETLAG_TEST_STUB_STALL;
  if (stall !== undefined) {
    const [event, ms] = stall.split(':').map(Number);
    let stalled = false;
    const sleeper = new Int32Array(new SharedArrayBuffer(4));
    hooks.duringService = (eventNumber) => {
      if (eventNumber !== event || stalled) return;
      stalled = true;
      Atomics.wait(sleeper, 0, 0, ms);
    };
  }
  if (kill !== null) {
    // stage times are settled once per event served: the kill comes after the picked one
    const before = hooks.stageTimes;
    hooks.stageTimes = (stageNs, at, towersClustered) => {
      before?.(stageNs, at, towersClustered);
      if (eventsServed++ === kill.slot) process.exit(9);
    };
  }
  return hooks;
}

/** A clusterer whose cost is known: it spins `us` µs on the clock and finds no jets. */
function spinningClusterer(us: number): Clusterer {
  return {
    name: `stub-${us}us`,
    settings: { ...DEFAULT_SETTINGS },
    cluster(): JetSet {
      const until = performance.now() + us / 1000;
      while (performance.now() < until) { /* the stub's cost */ }
      return emptyJetSet();
    },
  };
}

/** A clusterer whose cost is known and takes no CPU: it sleeps `us` µs and finds no jets. */
function sleepingClusterer(us: number): Clusterer {
  const sleeper = new Int32Array(new SharedArrayBuffer(4));
  return {
    name: `stub-sleep-${us}us`,
    settings: { ...DEFAULT_SETTINGS },
    cluster(): JetSet {
      // the deadline is the cost: a timed wait may end a little before it
      const until = performance.now() + us / 1000;
      for (let left = us / 1000; left > 0; left = until - performance.now()) Atomics.wait(sleeper, 0, 0, left);
      return emptyJetSet();
    },
  };
}

/**
 * A clusterer whose cost is c·N^exponent: it spins that many ns on the clock, from its call;
 * `nominal`: it spins not at all (the worker's stage-time hook reports the cost instead).
 */
function scalingClusterer(coefficientNs: number, exponent: number, nominal = false): Clusterer {
  const settings = { ...DEFAULT_SETTINGS };
  return {
    name: `stub-${coefficientNs}ns-N^${exponent}`,
    settings,
    cluster(_towerIndex: Int32Array, towerEt: Float64Array): JetSet {
      const start = performance.now();
      // the N the run tallies: towers above the threshold and not vanishingly small
      let towers = 0;
      for (let t = 0; t < towerEt.length; t++) if (towerEt[t] > settings.threshold && towerEt[t] >= MIN_ET) towers++;
      if (nominal) return emptyJetSet();
      const until = start + (coefficientNs * towers ** exponent) / 1e6;
      while (performance.now() < until) { /* the stub's cost */ }
      return emptyJetSet();
    },
  };
}

const fault = plantedFault();
/** JETLAG_TEST_KILL: the planted kill of the batch running now (slot -1: none) */
const kill = process.env.JETLAG_TEST_KILL ? { perMille: Number(process.env.JETLAG_TEST_KILL.split(':')[0]), seed: Number(process.env.JETLAG_TEST_KILL.split(':')[1]), slot: -1 } : null;
let eventsServed = 0;
const runBatch = makeBatchRunner(hooksFromEnvironment());

export default async function runBatchWithFaults(task: BatchTask): Promise<unknown> {
  if (kill !== null) {
    kill.slot = killsBatch(task.batchIndex, kill.perMille, kill.seed) ? killSlot(task.batchIndex, kill.seed, task.count) : -1;
    eventsServed = 0;
  }
  const serveDelayMs = Number(process.env.JETLAG_TEST_SERVE_DELAY_MS ?? 0);
  if ('serve' in (task as object) && serveDelayMs > 0) await new Promise((resolve) => setTimeout(resolve, serveDelayMs));
  if (fault && fault.batch === task.batchIndex) {
    if (fault.kind === 'throw') throw new Error(`planted fault in batch ${task.batchIndex}`);
    if (fault.kind === 'exit') process.exit(3);
    if (fault.kind === 'stall') await new Promise((resolve) => setTimeout(resolve, fault.ms));
  }
  return runBatch(task);
}
