// Tolerance mode of clustering-spec.md section 7 on one event at a time: planted faults in a
// copy of the reference's own jets are caught, an identical copy agrees. Events come from the
// toy generator (invented data).

import { describe, expect, it } from 'vitest';
import { generateEvents } from '../host/generator/generate.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher, deltaR } from '../host/validate/tolerance-compare.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type JetSet } from '../host/types.js';

interface Jets {
  count: number;
  pt: Float64Array;
  rapidity: Float64Array;
  phi: Float64Array;
}

function referenceJets(count: number, seed: number): JetSet[] {
  const clusterer = new ReferenceClusterer(DEFAULT_GRID, { ...DEFAULT_SETTINGS, threshold: 0.2 });
  const out: JetSet[] = [];
  for (const event of generateEvents(DEFAULT_GRID, { events: count, pileup: 20, seed })) {
    out.push(clusterer.cluster(event.towerIndex, event.towerEt));
  }
  return out;
}

function copyOf(jets: JetSet): Jets {
  return { count: jets.count, pt: jets.pt.slice(), rapidity: jets.rapidity.slice(), phi: jets.phi.slice() };
}

function withoutJet(jets: Jets, drop: number): Jets {
  const keep = (a: Float64Array) => Float64Array.from(a.filter((_, k) => k !== drop));
  return { count: jets.count - 1, pt: keep(jets.pt), rapidity: keep(jets.rapidity), phi: keep(jets.phi) };
}

function withJet(jets: Jets, pt: number, y: number, phi: number): Jets {
  const add = (a: Float64Array, v: number) => Float64Array.from([...a, v]);
  return { count: jets.count + 1, pt: add(jets.pt, pt), rapidity: add(jets.rapidity, y), phi: add(jets.phi, phi) };
}

const events = referenceJets(40, 5);
const ptMin = 20;
const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin });

/** the first event with a jet above ptMin whose φ is far from 0 and π (so 2π - φ is far away) */
function eventWithMirrorableJet(): { jets: JetSet; jet: number } {
  for (const jets of events) {
    for (let k = 0; k < jets.count; k++) {
      if (jets.pt[k] >= ptMin && Math.abs(jets.phi[k] - Math.PI) > 0.5 && jets.phi[k] > 0.5 && jets.phi[k] < 2 * Math.PI - 0.5) return { jets, jet: k };
    }
  }
  throw new Error('no suitable event');
}

describe('tolerance matching of one event', () => {
  it('an identical copy of every event agrees', () => {
    for (const jets of events) expect(matcher.match(jets, copyOf(jets))).toBe(true);
  });

  it('the events hold jets above ptMin, so the checks below have something to catch', () => {
    expect(events.filter((jets) => jets.pt[0] >= ptMin).length).toBeGreaterThan(30);
  });

  it('a dropped jet above ptMin makes the event disagree', () => {
    const jets = events.find((j) => j.pt[0] >= ptMin)!;
    expect(matcher.match(jets, withoutJet(copyOf(jets), 0))).toBe(false);
    expect(matcher.refAbove - matcher.refAboveMatched).toBe(1);
  });

  it('a dropped jet below ptMin does not', () => {
    const jets = events.find((j) => j.count > 1 && j.pt[j.count - 1] < ptMin)!;
    expect(matcher.match(jets, withoutJet(copyOf(jets), jets.count - 1))).toBe(true);
  });

  it('a pt shifted by 1 % is matched but outside the pt tolerance', () => {
    const jets = events.find((j) => j.pt[0] >= ptMin)!;
    const shifted = copyOf(jets);
    shifted.pt[0] *= 1.01;
    expect(matcher.match(jets, shifted)).toBe(false);
    expect(matcher.refMatch[0]).toBe(0);
    expect(matcher.refPtRatio[0]).toBeCloseTo(1.01, 12);
  });

  it('a pt shifted by half the tolerance still agrees', () => {
    const jets = events.find((j) => j.pt[0] >= ptMin)!;
    const shifted = copyOf(jets);
    shifted.pt[0] *= 1 + DEFAULT_TOLERANCE.ptTol / 2;
    expect(matcher.match(jets, shifted)).toBe(true);
  });

  it('a jet with φ mirrored to 2π - φ is lost, and its mirror counts as extra', () => {
    const { jets, jet } = eventWithMirrorableJet();
    const mirrored = copyOf(jets);
    mirrored.phi[jet] = 2 * Math.PI - mirrored.phi[jet];
    expect(matcher.match(jets, mirrored)).toBe(false);
    expect(matcher.refMatch[jet]).toBe(-1);
    expect(matcher.candExtra[jet]).toBe(1);
  });

  it('an extra soft jet above ptMin far from every reference jet makes the event disagree', () => {
    const jets = events.find((j) => j.pt[0] >= ptMin)!;
    // a point of the grid at least 0.5 away from every reference jet
    let y = -2;
    let phi = 0;
    search: for (let a = -2; a <= 2; a += 0.25) {
      for (let b = 0; b < 6.2; b += 0.25) {
        let ok = true;
        for (let k = 0; k < jets.count; k++) if (deltaR(a, b, jets.rapidity[k], jets.phi[k]) < 0.5) ok = false;
        if (ok) { y = a; phi = b; break search; }
      }
    }
    expect(matcher.match(jets, withJet(copyOf(jets), ptMin + 1, y, phi))).toBe(false);
    expect(matcher.candAboveUnmatched).toBe(1);
  });

  it('an extra jet below ptMin is allowed', () => {
    const jets = events.find((j) => j.pt[0] >= ptMin)!;
    expect(matcher.match(jets, withJet(copyOf(jets), ptMin / 2, 0, 1))).toBe(true);
  });

  it('a candidate jet above ptMin standing on a reference jet below ptMin, and differing from it, is extra', () => {
    const reference = { count: 1, pt: Float64Array.of(10), rapidity: Float64Array.of(0.3), phi: Float64Array.of(1) };
    const candidate = { count: 1, pt: Float64Array.of(25), rapidity: Float64Array.of(0.3), phi: Float64Array.of(1) };
    expect(matcher.match(reference, candidate)).toBe(false);
    expect(matcher.candAboveExtra).toBe(1);
  });

  it('candidate jets may come in any order', () => {
    const jets = events.find((j) => j.count > 3)!;
    const copy = copyOf(jets);
    const reversed = { count: copy.count, pt: copy.pt.reverse(), rapidity: copy.rapidity.reverse(), phi: copy.phi.reverse() };
    expect(matcher.match(jets, reversed)).toBe(true);
  });

  it('a candidate reporting φ in (-π, π] agrees with the reference in [0, 2π)', () => {
    const jets = events.find((j) => j.count > 3)!;
    const shifted = copyOf(jets);
    for (let k = 0; k < shifted.count; k++) if (shifted.phi[k] > Math.PI) shifted.phi[k] -= 2 * Math.PI;
    expect(matcher.match(jets, shifted)).toBe(true);
  });

  it('a NaN pt in the candidate disagrees instead of passing', () => {
    const jets = events.find((j) => j.pt[0] >= ptMin)!;
    const broken = copyOf(jets);
    broken.pt[0] = NaN;
    expect(matcher.match(jets, broken)).toBe(false);
  });

  it('each reference jet takes the closest unmatched candidate, harder reference jets first', () => {
    // two reference jets 0.06 apart; candidate jet 0 lies between them, nearer the softer one
    const reference = { count: 2, pt: Float64Array.of(50, 40), rapidity: Float64Array.of(0, 0.06), phi: Float64Array.of(1, 1) };
    const candidate = { count: 2, pt: Float64Array.of(50, 40), rapidity: Float64Array.of(0.04, 0.0), phi: Float64Array.of(1, 1) };
    matcher.match(reference, candidate);
    expect(matcher.refMatch[0]).toBe(1);
    expect(matcher.refMatch[1]).toBe(0);
  });

  it('ΔR takes the azimuth the short way round across 0 = 2π', () => {
    expect(deltaR(0, 0.01, 0, 2 * Math.PI - 0.01)).toBeCloseTo(0.02, 14);
    expect(deltaR(0, -0.01, 0, 2 * Math.PI - 0.01)).toBeCloseTo(0, 14);
  });

  it('events rank by badness: missing jets above any size of pt difference', () => {
    const jets = events.find((j) => j.pt[0] >= ptMin && j.count > 1)!;
    const shifted = copyOf(jets);
    shifted.pt[0] *= 1.5;
    matcher.match(jets, shifted);
    const shiftBadness = matcher.badness();
    matcher.match(jets, withoutJet(copyOf(jets), 0));
    expect(matcher.badness()).toBeGreaterThan(shiftBadness);
  });
});
