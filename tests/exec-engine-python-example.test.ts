// The Python example engine (examples/engines/python) under the exec driver, with Debian's
// python3 and python3-protobuf (.ci/run installs them): 20 invented toy-generator events, its
// jets checked against the reference in tolerance mode (clustering spec section 7). It is slow;
// only agreement is checked here.

import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { ExecOutcome } from '../host/pipeline/exec-engine.js';
import type { ClusterSettings } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents } from './support/run-files.js';
import { disagreeingEvents, runExampleEngine } from './support/example-engine.js';

const EXAMPLE_DIR = join(import.meta.dirname, '..', 'examples', 'engines', 'python');
/** Debian's interpreter, which sees Debian's python3-protobuf */
const PYTHON = '/usr/bin/python3';
const SETTINGS: ClusterSettings = { p: -1, radius: 0.4, ptMin: 1, threshold: 0.2, recombination: 'e' };
const EVENTS = 20;

describe('the Python example engine', () => {
  const build = tempDirForSuite('python-engine');
  const events = toyEvents(EVENTS, 5, 20);
  let outcomes: ExecOutcome[] = [];
  let faults: string[] = [];

  beforeAll(async () => {
    // the generated module comes through PYTHONPATH; no bytecode caches in the tree
    ({ outcomes, faults } = await runExampleEngine(EXAMPLE_DIR, build, [PYTHON, join(EXAMPLE_DIR, 'pairwise_clusterer.py')], SETTINGS, events, 60_000,
      { PYTHONPATH: build, PYTHONDONTWRITEBYTECODE: '1' }));
  }, 600_000);

  it('answers every event and agrees with the reference in tolerance mode on each', () => {
    expect(faults).toEqual([]);
    expect(outcomes).toHaveLength(EVENTS);
    for (const outcome of outcomes) expect(outcome.ok).toBe(true);
    const { disagreeing, referenceJets: jets } = disagreeingEvents(outcomes, events, SETTINGS);
    expect(disagreeing).toEqual([]);
    expect(jets).toBeGreaterThan(EVENTS);
  });
});
