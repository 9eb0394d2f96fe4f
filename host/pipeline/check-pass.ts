// The check after the timing: the events of the --check sample, kept by the timed pass
// (RunDelivery.checkSample), go through a pool of their own whose workers run the engine and
// the reference and compare them bit for bit. The reference (tens of ms an event) never runs
// beside a timed event, so no figure of the timed pass holds any of its cost; which events were
// checked is the sample rule of the run's configuration (a hash of event number and seed).

import { BatchBuilder, BatchPool } from './pool.js';
import type { RunDelivery, SampledRecord } from './run-delivery.js';
import type { WorkerConfig } from './worker-contract.js';

export interface CheckPassPlan {
  workers: number;
  /** events per task at most; fewer when the sample is small, so every worker gets some */
  batch: number;
  /** the timed pass's worker configuration; the check pass compares every event it is given */
  config: WorkerConfig;
  workerFile?: string;
  /** stops dispatching; what is in flight is drained */
  signal?: AbortSignal;
}

export async function runCheckPass(sample: readonly SampledRecord[], plan: CheckPassPlan, delivery: RunDelivery): Promise<void> {
  if (sample.length === 0) return;
  const workers = Math.max(1, Math.min(plan.workers, sample.length));
  const batch = Math.max(1, Math.min(plan.batch, Math.ceil(sample.length / (2 * workers))));
  const pool = new BatchPool({
    workers,
    maxInFlight: 2 * workers,
    config: { ...plan.config, checkFraction: 1, checkApart: false, encodeJets: false },
    workerFile: plan.workerFile,
    deliver: (outcome) => delivery.deliverCheck(outcome),
  });
  try {
    let batchIndex = 0;
    for (let from = 0; from < sample.length; from += batch) {
      if (plan.signal?.aborted) break;
      const builder = new BatchBuilder();
      const to = Math.min(sample.length, from + batch);
      for (let k = from; k < to; k++) builder.add(sample[k].bytes, sample[k].offset);
      await pool.waitForRoom();
      pool.dispatch(builder.seal(batchIndex++), sample[from].record, new Float64Array(to - from));
    }
    await pool.drain();
  } finally {
    await pool.close();
  }
}
