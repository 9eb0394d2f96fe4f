// Tolerance mode (clustering-spec.md section 7) for groomed jets (section 12): beside the plain
// jets, compare's figures for the trimmed and the soft-dropped pt and mass of each matched pair.
//
//   Pairs are the plain matcher's (ToleranceMatcher): a reference jet with pt >= ptMin and the
//   candidate jet it matched. For each groomer both sides carry, per pair:
//     pt response    pt_cand / pt_ref of the groomed jets (pairs with groomed pt_ref > 0)
//     mass response  m_cand / m_ref of the groomed jets (pairs with groomed m_ref > 0)
//     agreement      |pt_cand / pt_ref - 1| <= ptTol (both 0: an empty trimmed jet on both
//                    sides agrees) and |m_cand - m_ref| <= ptTol * pt_ref: the mass is held to
//                    the same relative tolerance as pt, measured against the groomed pt
//                    because a groomed mass may be 0 (a one-tower soft-drop jet)
// Layout: two DeviationHistograms and two counters per groomer; nothing per event.

import { DeviationHistogram, type DistributionSummary } from './deviation-histogram.js';
import type { ToleranceMatcher } from './tolerance-compare.js';
import { ratio } from './validation-report.js';

/** One groomer's pt and mass, row k for jet k of the plain jets. */
export interface GroomedColumns {
  pt: ArrayLike<number>;
  mass: ArrayLike<number>;
}

export type GroomerName = 'trim' | 'softdrop';
export const GROOMER_NAMES: readonly GroomerName[] = ['trim', 'softdrop'];

export interface GroomedAgreementReport {
  groomer: GroomerName;
  /** matched pairs above ptMin with the groomer's values on both sides */
  pairs: number;
  agreeing: number;
  agreeingFraction: number | null;
  ptResponse: DistributionSummary;
  massResponse: DistributionSummary;
  /** pairs whose reference groomed mass is 0 (no mass response; they still count for agreement) */
  massZeroReference: number;
}

class GroomerFigures {
  pairs = 0;
  agreeing = 0;
  massZeroReference = 0;
  readonly ptResponse = new DeviationHistogram();
  readonly massResponse = new DeviationHistogram();
}

export class GroomedAgreement {
  private readonly figures: Record<GroomerName, GroomerFigures> = { trim: new GroomerFigures(), softdrop: new GroomerFigures() };

  constructor(private readonly ptMin: number, private readonly ptTol: number) {}

  /** The matched pairs of one event (after matcher.match): reference and candidate groomed columns of one groomer. */
  add(groomer: GroomerName, matcher: ToleranceMatcher, referencePt: ArrayLike<number>, reference: GroomedColumns, candidate: GroomedColumns): void {
    const f = this.figures[groomer];
    for (let r = 0; r < matcher.refCount; r++) {
      const c = matcher.refMatch[r];
      if (c < 0 || !(referencePt[r] >= this.ptMin)) continue;
      f.pairs++;
      const ptRef = reference.pt[r];
      const ptCand = candidate.pt[c];
      const massRef = reference.mass[r];
      const massCand = candidate.mass[c];
      if (ptRef > 0) f.ptResponse.add(ptCand / ptRef - 1);
      if (massRef > 0) f.massResponse.add(massCand / massRef - 1);
      else f.massZeroReference++;
      const ptAgrees = ptRef > 0 ? Math.abs(ptCand / ptRef - 1) <= this.ptTol : ptCand === 0;
      const massAgrees = Math.abs(massCand - massRef) <= this.ptTol * ptRef;
      if (ptAgrees && massAgrees) f.agreeing++;
    }
  }

  /** one entry per groomer that had pairs */
  report(): GroomedAgreementReport[] {
    return GROOMER_NAMES.filter((name) => this.figures[name].pairs > 0).map((groomer) => {
      const f = this.figures[groomer];
      return {
        groomer, pairs: f.pairs, agreeing: f.agreeing, agreeingFraction: ratio(f.agreeing, f.pairs),
        ptResponse: f.ptResponse.summary(1), massResponse: f.massResponse.summary(1), massZeroReference: f.massZeroReference,
      };
    });
  }
}

function shortNumber(value: number | null): string {
  if (value === null) return '-';
  return Number(value.toPrecision(6)).toString();
}

/** The groomed figures as terminal text: one block per groomer, '' when there are none. */
export function formatGroomedAgreement(reports: readonly GroomedAgreementReport[], ptTol: number): string {
  if (reports.length === 0) return '';
  const lines = [`groomed jets (matched pairs above ptMin; pt within ${ptTol} relative, mass within ${ptTol} x groomed pt_ref):`];
  for (const r of reports) {
    lines.push(`  ${r.groomer.padEnd(9)}pairs ${r.pairs}  agreeing ${r.agreeing} (${r.agreeingFraction === null ? '-' : `${(100 * r.agreeingFraction).toFixed(2)} %`})`);
    lines.push(`  ${''.padEnd(9)}pt response (c/r)   n ${r.ptResponse.count}  mean ${shortNumber(r.ptResponse.mean)}  rms ${shortNumber(r.ptResponse.rms)}  p50 ${shortNumber(r.ptResponse.quantiles.p50)}`);
    lines.push(`  ${''.padEnd(9)}mass response (c/r) n ${r.massResponse.count}  mean ${shortNumber(r.massResponse.mean)}  rms ${shortNumber(r.massResponse.rms)}  p50 ${shortNumber(r.massResponse.quantiles.p50)}` +
      (r.massZeroReference > 0 ? `  (${r.massZeroReference} with reference mass 0)` : ''));
  }
  return lines.join('\n') + '\n';
}
