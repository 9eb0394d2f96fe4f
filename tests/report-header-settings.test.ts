// The run header states every setting that changes the result: the pileup steps and the
// grooming too, when they ran, in the words `describePileup` and `describeGrooming` give them.

import { describe, expect, it } from 'vitest';
import { formatReport } from '../host/measure/report.js';
import { RunTally } from '../host/measure/run-tally.js';
import { describeMachine, renderSummary, type RunConfiguration } from '../host/measure/summary.js';
import { testRunConfiguration } from './support/run-configuration.js';

function headerOf(extra: Partial<RunConfiguration>): string {
  const tally = new RunTally();
  tally.read = tally.ok = 1;
  tally.recordService(20, 1000);
  const summary = renderSummary(tally, { configuration: testRunConfiguration(extra), shards: [{ index: 0, count: 1 }], machine: describeMachine(), partial: false, partialReason: null, wallSeconds: 1 });
  return formatReport(summary).split('\n')[0];
}

describe('the run header', () => {
  it('names the pileup steps and the grooming that ran', () => {
    const header = headerOf({
      pileup: { areas: true, ghostEt: 1e-100, rho: { kind: 'kt', radius: 0.4 }, subtract: true, softKiller: { etaRows: 5, phiColumns: 5 } },
      grooming: { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } },
    });
    expect(header).toContain(' · grid η -2.5..2.5 50×64 · pileup areas, ρ kt:0.4, subtraction, SoftKiller 5:5 · grooming trim:0.2:0.05 softdrop:0.1:0 · engine wasm');
  });

  it('leaves them out when none ran', () => {
    const header = headerOf({});
    expect(header).not.toContain('pileup');
    expect(header).not.toContain('grooming');
  });
});
