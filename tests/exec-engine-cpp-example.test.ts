// The C++ example engine (examples/engines/cpp) under the exec driver: built into a temporary
// folder with Debian's protobuf (.ci/run installs protobuf-compiler and libprotobuf-dev), fed
// 300 invented toy-generator events, its jets checked against the reference in tolerance mode
// (clustering spec section 7) on every event, and its own clustering time below the round trip
// jetlag measures around it.

import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { ExecOutcome } from '../host/pipeline/exec-engine.js';
import type { ClusterSettings } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents } from './support/run-files.js';
import { disagreeingEvents, runExampleEngine } from './support/example-engine.js';

const EXAMPLE_DIR = join(import.meta.dirname, '..', 'examples', 'engines', 'cpp');
const SETTINGS: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0.2, recombination: 'e' };
const EVENTS = 300;

describe('the C++ example engine', () => {
  const build = tempDirForSuite('cpp-engine');
  const program = join(build, 'pairwise-clusterer');
  const events = toyEvents(EVENTS, 12, 40);
  let outcomes: ExecOutcome[] = [];
  let faults: string[] = [];

  beforeAll(async () => {
    ({ outcomes, faults } = await runExampleEngine(EXAMPLE_DIR, build, [program], SETTINGS, events, 10_000));
  }, 600_000);

  it('answers every event', () => {
    expect(faults).toEqual([]);
    expect(outcomes.filter((outcome) => outcome.ok)).toHaveLength(EVENTS);
  });

  it('agrees with the reference in tolerance mode on every event', () => {
    const { disagreeing, referenceJets: jets } = disagreeingEvents(outcomes, events, SETTINGS);
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
