// Which compared candidate events carried groomed values (spec section 12), so that `jetlag
// compare` says in one line when the reference grooms and the candidate gives nothing to compare
// the groomed jets with, rather than leaving the groomed figures out without a word.

import type { CandidateEvent, CandidateFormat } from '../input/candidate-reader.js';
import type { JetSet } from '../types.js';

const GROOMERS = [
  { key: 'trim', jets: 'trimmed', jsonKey: '"trim" objects', recordRows: 'trimmed rows' },
  { key: 'softdrop', jets: 'soft-dropped', jsonKey: '"softdrop" objects', recordRows: 'soft-drop rows' },
] as const;

export class GroomedCoverage {
  /** compared events where the reference groomed and the candidate had jets, per groomer */
  private readonly withJets = { trim: 0, softdrop: 0 };
  /** of those, the events whose candidate jets carried the groomer's values */
  private readonly carried = { trim: 0, softdrop: 0 };

  add(reference: JetSet, candidate: CandidateEvent): void {
    if (candidate.count === 0) return;
    if (reference.trim) {
      this.withJets.trim++;
      if (candidate.groomed?.trim) this.carried.trim++;
    }
    if (reference.softDrop) {
      this.withJets.softdrop++;
      if (candidate.groomed?.softdrop) this.carried.softdrop++;
    }
  }

  /** one line per groomer the reference ran whose values the candidate lacked somewhere */
  notes(format: CandidateFormat): string[] {
    const lines: string[] = [];
    for (const groomer of GROOMERS) {
      const withJets = this.withJets[groomer.key];
      const missing = withJets - this.carried[groomer.key];
      if (missing === 0) continue;
      const why = format === 'csv' ? `its header has no ${groomer.key} columns (jetlag export writes them for groomed jets)`
        : format === 'jsonl' ? `its jets lack ${groomer.jsonKey}`
          : `its records hold no ${groomer.recordRows}`;
      const where = missing === withJets ? '' : ` in ${missing} of ${withJets} candidate events with jets`;
      lines.push(`jetlag compare: ${groomer.jets} pt and mass not compared${where}: the candidate (${format}) gives none, ${why}`);
    }
    return lines;
  }
}
