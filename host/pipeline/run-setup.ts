// What a run sets up before its timed pass: the engine refused early, the progress bar's size,
// the workers' configuration, and the output files (run.ts has the steps of a run).

import { statSync } from 'node:fs';
import { isGzipPath } from '../input/record-index.js';
import { UsageError } from '../errors.js';
import { loadEngineModule } from '../clustering/engine-module.js';
import { WasmClusterer } from '../clustering/engine.js';
import { checkFractionOf, type RunOptions, type RunPlan } from './run-plan.js';
import type { WorkerConfig } from './worker-contract.js';
import type { ExecWorkerConfig } from './exec-run-contract.js';
import type { ClusterSettings, Grid } from '../types.js';
import { encodeJetsFileHeader } from '../formats/jets-codec.js';
import { ReproWriter } from '../output/repro-writer.js';
import { OutputFile } from '../output/output-file.js';
import { producerName } from '../version.js';
import { programGroupsBuffer } from './exec-groups.js';
import { programSeatsBuffer } from './exec-cpu.js';

/**
 * Refuses up front, in one line, what the workers' engines would refuse (or a missing build),
 * rather than failing every batch or timing some other clusterer.
 */
export function refuseUnusableEngine(grid: Grid, settings: ClusterSettings): void {
  const module = loadEngineModule(); // a missing build says so itself
  try {
    new WasmClusterer(grid, settings, { module });
  } catch (error) {
    throw new UsageError(`run: the engine cannot cluster with these settings: ${(error as Error).message}`);
  }
}

/**
 * The input's size for the progress bar's ETA, which compares record offsets with it: only an
 * uncompressed file read to its end has one (gzip offsets count inflated bytes); 0 for gzip,
 * stdin and --events, whose bar shows events and rate only.
 */
export function progressBytesTotal(options: RunOptions): number {
  if (options.input === '-') return 0;
  try {
    return !isGzipPath(options.input) && options.maxEvents == null ? statSync(options.input).size : 0;
  } catch {
    return 0;
  }
}

export function workerConfigOf(plan: RunPlan, grid: Grid, encodeJets: boolean, program: ExecWorkerConfig | null): WorkerConfig {
  // the timed pass sends its check sample back; the reference runs after it (check-pass.ts)
  const config: WorkerConfig = { grid, settings: plan.settings, pileup: plan.pileup, grooming: plan.grooming, engine: plan.engine, checkFraction: checkFractionOf(plan.check), checkSeed: plan.check.seed, encodeJets, checkApart: true };
  // a program's jets exist only in its worker: the check runs there, after each answer
  return program ? { ...config, exec: { ...program, groups: programGroupsBuffer(), programSeats: programSeatsBuffer() }, checkApart: false } : config;
}

/**
 * Opens the jets file (with its header on the way) and the repro file before the run, so an
 * output that cannot be written costs no run; both are written under temporary names and
 * renamed when complete ('-' is stdout).
 */
export async function openOutputs(options: RunOptions, plan: RunPlan, grid: Grid, inputLabel: string) {
  const jetsFile = options.out ? await OutputFile.open(options.out, { force: options.force }) : null;
  const jetsHeaderPending = jetsFile
    ? jetsFile.write(encodeJetsFileHeader(grid, { ...plan.settings, engine: options.program?.label ?? plan.engine, ...(plan.pileup ? { pileup: plan.pileup } : {}), ...(plan.grooming ? { grooming: plan.grooming } : {}) }, { producer: producerName('run'), label: inputLabel }))
    : undefined;
  const repro = options.repro ? await ReproWriter.open(options.repro, { grid, source: plan.label, engine: options.program?.label ?? plan.engine, force: options.force }) : null;
  return { jetsFile, jetsHeaderPending, repro };
}
