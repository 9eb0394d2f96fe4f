// `run --engine exec: --check none`: no comparison ran, so the summary names no check mode
// (check.mode null) and the program's report says that none ran rather than a mode. The
// program is tests/fixtures/engines/faulty-engine.mjs behaving well.

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runEvents } from '../host/pipeline/run.js';
import { formatProgramReport } from '../host/measure/program-report.js';
import type { ClusterSettings } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const SETTINGS: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0.2, recombination: 'e' };
const dir = tempDirForSuite('exec-run-check-none');
const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(12, 6, 2)).path;

describe('run --engine exec: --check none', () => {
  it('names no check mode in the summary and says no check ran in the report', async () => {
    const summary = await runEvents({
      input, workers: 1, batch: 4, check: { mode: 'none', fraction: 0, seed: 1 }, settings: SETTINGS, progress: null,
      program: { argv: [process.execPath, FIXTURE, 'well', '-1'], label: 'exec:faulty-engine well', timeoutMs: 10_000, maxRestarts: 0, tolerance: null },
    });
    expect(summary.events.ok).toBe(12);
    expect(summary.check.checked).toBe(0);
    expect(summary.check.mode).toBeNull();
    const report = formatProgramReport(summary);
    expect(report).toContain('check: none (--check none)');
    expect(report).not.toContain('bit for bit');
  }, 60_000);
});
