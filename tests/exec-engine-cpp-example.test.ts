// The C++ example engine (examples/engines/cpp) under the exec driver: built into a temporary
// folder with Debian's protobuf (.ci/run installs protobuf-compiler and libprotobuf-dev), fed
// 300 invented toy-generator events, its jets checked against the reference in tolerance mode
// (clustering spec section 7) on every event, and its own clustering time below the round trip
// jetlag measures around it.

import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ExecEngine, type ExecOutcome } from '../host/pipeline/exec-engine.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher } from '../host/validate/tolerance-compare.js';
import { DEFAULT_GRID, type ClusterSettings } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents } from './support/run-files.js';

const EXAMPLE_DIR = join(import.meta.dirname, '..', 'examples', 'engines', 'cpp');
const SETTINGS: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0.2, recombination: 'e' };
const EVENTS = 300;

describe('the C++ example engine', () => {
  const build = tempDirForSuite('cpp-engine');
  const program = join(build, 'pairwise-clusterer');
  const events = toyEvents(EVENTS, 12, 40);
  const outcomes: ExecOutcome[] = [];
  let faults: string[] = [];

  beforeAll(async () => {
    execFileSync('make', ['-s', '-C', EXAMPLE_DIR, `BUILD=${build}`], { stdio: ['ignore', 'ignore', 'inherit'] });
    faults = [];
    const engine = await ExecEngine.start({
      argv: [program], label: 'exec:pairwise-clusterer', grid: DEFAULT_GRID, settings: SETTINGS, producer: 'jetlag tests',
      timeoutMs: 10_000, maxRestarts: 0, onFault: (line) => faults.push(line),
    });
    for (const event of events) {
      outcomes.push(await engine.submit(event.event, Int32Array.from(event.towerIndex!), Float64Array.from(event.towerEt!)));
    }
    await engine.close();
  }, 600_000);

  it('answers every event', () => {
    expect(faults).toEqual([]);
    expect(outcomes.filter((outcome) => outcome.ok)).toHaveLength(EVENTS);
  });

  it('agrees with the reference in tolerance mode on every event', () => {
    const reference = new ReferenceClusterer(DEFAULT_GRID, SETTINGS);
    const matcher = new ToleranceMatcher(DEFAULT_TOLERANCE);
    const disagreeing: number[] = [];
    let jets = 0;
    for (let k = 0; k < EVENTS; k++) {
      const outcome = outcomes[k];
      if (!outcome.ok) continue;
      const referenceJets = reference.cluster(Int32Array.from(events[k].towerIndex!), Float64Array.from(events[k].towerEt!));
      jets += referenceJets.count;
      if (!matcher.match(referenceJets, outcome.jets)) disagreeing.push(outcome.event);
    }
    expect(disagreeing).toEqual([]);
    // a check over events without jets would pass for any program
    expect(jets).toBeGreaterThan(EVENTS);
  });

  it('reports its own clustering time, below the round trip jetlag measures', () => {
    for (const outcome of outcomes) {
      if (!outcome.ok) continue;
      expect(outcome.serviceNs).toBeGreaterThan(0);
      expect(outcome.serviceNs).toBeLessThan(outcome.roundTripNs);
    }
  });
});
