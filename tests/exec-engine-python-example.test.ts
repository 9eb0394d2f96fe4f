// The Python example engine (examples/engines/python) under the exec driver, with Debian's
// python3 and python3-protobuf (.ci/run installs them): 20 invented toy-generator events, its
// jets checked against the reference in tolerance mode (clustering spec section 7). It is slow;
// only agreement is checked here.

import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ExecEngine, type ExecOutcome } from '../host/pipeline/exec-engine.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher } from '../host/validate/tolerance-compare.js';
import { DEFAULT_GRID, type ClusterSettings } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents } from './support/run-files.js';

const EXAMPLE_DIR = join(import.meta.dirname, '..', 'examples', 'engines', 'python');
/** Debian's interpreter, which sees Debian's python3-protobuf */
const PYTHON = '/usr/bin/python3';
const SETTINGS: ClusterSettings = { p: -1, radius: 0.4, ptMin: 1, threshold: 0.2, recombination: 'e' };
const EVENTS = 20;

describe('the Python example engine', () => {
  const build = tempDirForSuite('python-engine');
  const events = toyEvents(EVENTS, 5, 20);
  const outcomes: ExecOutcome[] = [];
  let faults: string[] = [];

  beforeAll(async () => {
    execFileSync('make', ['-s', '-C', EXAMPLE_DIR, `BUILD=${build}`], { stdio: ['ignore', 'ignore', 'inherit'] });
    faults = [];
    const engine = await ExecEngine.start({
      argv: [PYTHON, join(EXAMPLE_DIR, 'pairwise_clusterer.py')],
      // the generated module comes through PYTHONPATH; no bytecode caches in the tree
      env: { PYTHONPATH: build, PYTHONDONTWRITEBYTECODE: '1' },
      label: 'exec:pairwise_clusterer.py', grid: DEFAULT_GRID, settings: SETTINGS,
      producer: 'jetlag tests', timeoutMs: 60_000, maxRestarts: 0, onFault: (line) => faults.push(line),
    });
    for (const event of events) {
      outcomes.push(await engine.submit(event.event, Int32Array.from(event.towerIndex!), Float64Array.from(event.towerEt!)));
    }
    await engine.close();
  }, 600_000);

  it('answers every event and agrees with the reference in tolerance mode on each', () => {
    expect(faults).toEqual([]);
    const reference = new ReferenceClusterer(DEFAULT_GRID, SETTINGS);
    const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: SETTINGS.ptMin });
    const disagreeing: number[] = [];
    let jets = 0;
    for (let k = 0; k < EVENTS; k++) {
      const outcome = outcomes[k];
      expect(outcome.ok).toBe(true);
      if (!outcome.ok) continue;
      const referenceJets = reference.cluster(Int32Array.from(events[k].towerIndex!), Float64Array.from(events[k].towerEt!));
      jets += referenceJets.count;
      if (!matcher.match(referenceJets, outcome.jets)) disagreeing.push(outcome.event);
    }
    expect(disagreeing).toEqual([]);
    expect(jets).toBeGreaterThan(EVENTS);
  });
});
