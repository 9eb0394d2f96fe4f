// Running an example engine program (examples/engines/) over invented events under the exec
// driver, and holding its answers against the reference in tolerance mode (spec section 7).

import { execFile } from 'node:child_process';
import { basename } from 'node:path';
import { promisify } from 'node:util';
import { ExecEngine, type ExecOutcome } from '../../host/pipeline/exec-engine.js';
import { ReferenceClusterer } from '../../host/clustering/reference.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher } from '../../host/validate/tolerance-compare.js';
import { DEFAULT_GRID, type ClusterSettings } from '../../host/types.js';
import type { EventRecordFields } from '../../host/formats/event-codec.js';

export interface ExampleRun {
  outcomes: ExecOutcome[];
  faults: string[];
}

/**
 * Builds the example with its Makefile into `build` (Debian's protobuf), without holding up the
 * event loop; when it fails, the error carries make's own messages.
 */
export async function buildExampleEngine(exampleDir: string, build: string): Promise<void> {
  try {
    await promisify(execFile)('make', ['-s', '-C', exampleDir, `BUILD=${build}`], { encoding: 'utf8' });
  } catch (error) {
    throw new Error(`building ${exampleDir} failed: ${(error as { stderr?: string }).stderr ?? (error as Error).message}`);
  }
}

/** Builds the example with its Makefile into `build`, then sends it every event, one at a time. */
export async function runExampleEngine(exampleDir: string, build: string, argv: string[], settings: ClusterSettings,
  events: readonly EventRecordFields[], timeoutMs: number, env?: Record<string, string>): Promise<ExampleRun> {
  await buildExampleEngine(exampleDir, build);
  const faults: string[] = [];
  const engine = await ExecEngine.start({
    argv, env, label: `exec:${basename(argv[argv.length - 1])}`, grid: DEFAULT_GRID, settings, producer: 'jetlag tests',
    timeoutMs, maxRestarts: 0, onFault: (line) => faults.push(line),
  });
  const outcomes: ExecOutcome[] = [];
  for (const event of events) {
    outcomes.push(await engine.submit(event.event, Int32Array.from(event.towerIndex!), Float64Array.from(event.towerEt!)));
  }
  await engine.close();
  return { outcomes, faults };
}

/** The events whose answer does not agree with the reference in tolerance mode, and the reference's jet count. */
export function disagreeingEvents(outcomes: readonly ExecOutcome[], events: readonly EventRecordFields[], settings: ClusterSettings): { disagreeing: number[]; referenceJets: number } {
  const reference = new ReferenceClusterer(DEFAULT_GRID, settings);
  const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: settings.ptMin });
  const disagreeing: number[] = [];
  let referenceJets = 0;
  for (let k = 0; k < events.length; k++) {
    const outcome = outcomes[k];
    if (!outcome.ok) continue;
    const jets = reference.cluster(Int32Array.from(events[k].towerIndex!), Float64Array.from(events[k].towerEt!));
    referenceJets += jets.count;
    if (!matcher.match(jets, outcome.jets)) disagreeing.push(outcome.event);
  }
  return { disagreeing, referenceJets };
}
