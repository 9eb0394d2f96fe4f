// A toy event generator of our own, for demos and benchmarks only. The data are invented:
// the scenario is the fictional "Halden ring", a made-up hadron collider whose central
// calorimeter ("HCAL-H") is read out on jetlag's default 50 x 64 tower grid. Nothing here
// models a real detector; it only has the shapes a trigger test needs:
//   - 1..maxHardJets hard jets per event: a hard core tower and a shower of softer
//     deposits whose density falls off with angle from the jet axis;
//   - a Poisson number of soft pileup interactions with mean `pileup` (or, with a range, a mean
//     drawn per event uniformly from pileup..pileupMax), each leaving a few soft
//     deposits spread over the whole grid (mean pileup of 100-200 soft interactions per
//     crossing is the regime of current and upgraded hadron colliders: fact of the trade,
//     common practice);
//   - Gaussian tower noise on occupied towers and a sprinkle of noise-only towers, which can
//     be negative (the threshold drops those).
// Every random number comes from one seeded generator, so a seed gives the same file anywhere.

import { binDeposits, makeGridTables, type GridTables } from '../clustering/grid.js';
import type { DecodedEvent } from '../formats/event-codec.js';
import type { Grid } from '../types.js';
import { makeRandom } from '../random.js';
import { addBoostedObjects } from './boosted.js';

export interface GeneratorSettings {
  events: number;
  /** mean number of soft pileup interactions per event (the lowest mean when pileupMax is given) */
  pileup: number;
  /**
   * when given, each event's mean pileup is drawn uniformly from pileup..pileupMax, so that a
   * file spreads over tower multiplicities (for the fit of time against N); when absent, no
   * draw is made and a seed gives the very file it gave before ranges existed
   */
  pileupMax?: number;
  seed: number;
  /** hard jets per event are drawn uniformly from 1..maxHardJets */
  maxHardJets?: number;
  /** write raw deposits (eta, phi, et) instead of binned towers */
  raw?: boolean;
  /**
   * invented heavy particles per event decaying to two or three prongs (boosted.ts); 0 or
   * absent: none, and no random draw is made, so a seed gives the file it gave before
   */
  boosted?: number;
  /** every boosted object of this many prongs instead of a random choice (benchmarks of one kind) */
  boostedProngs?: 2 | 3;
}

/** binned towers (raw = false) or raw deposits (raw = true), the other arrays empty */
export type GeneratedEvent = Omit<DecodedEvent, 'error'>;

/** deposits per pileup interaction (mean of a Poisson) and their mean et in GeV */
const PILEUP_DEPOSITS_MEAN = 5;
const PILEUP_ET_MEAN_GEV = 0.45;
/** Gaussian noise on every occupied tower, and the fraction of empty towers with a noise hit */
const NOISE_SIGMA_GEV = 0.08;
const NOISE_HIT_FRACTION = 0.02;

function poisson(random: () => number, mean: number): number {
  if (mean <= 0) return 0;
  if (mean > 50) {
    // normal approximation, plenty for a toy
    return Math.max(0, Math.round(mean + Math.sqrt(mean) * gaussian(random)));
  }
  const limit = Math.exp(-mean);
  let count = 0;
  let product = random();
  while (product > limit) {
    count++;
    product *= random();
  }
  return count;
}

function gaussian(random: () => number): number {
  const u = 1 - random();
  const v = random();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

function exponential(random: () => number, mean: number): number {
  return -mean * Math.log(1 - random());
}

/** Streams generated events; memory does not grow with the number of events. */
export function* generateEvents(grid: Grid, settings: GeneratorSettings): Generator<GeneratedEvent> {
  const tables = makeGridTables(grid);
  const random = makeRandom(settings.seed);
  for (let event = 0; event < settings.events; event++) {
    yield generateOne(tables, settings, random, event);
  }
}

/**
 * What the generator knows and an event file does not: the towers of its hard jets alone (their
 * deposits binned without pileup and noise), for benchmarks that measure how well pileup is
 * removed. A side channel: the events are the very ones generateEvents gives.
 */
export interface HardTruth {
  towerIndex: Int32Array;
  towerEt: Float64Array;
}

/** generateEvents, each event with its hard jets' towers beside it */
export function* generateEventsWithTruth(grid: Grid, settings: GeneratorSettings): Generator<{ event: GeneratedEvent; hard: HardTruth }> {
  const tables = makeGridTables(grid);
  const random = makeRandom(settings.seed);
  for (let event = 0; event < settings.events; event++) {
    const hard = { eta: [] as number[], phi: [] as number[], et: [] as number[] };
    const generated = generateOne(tables, settings, random, event, hard);
    const binned = binDeposits(tables, hard.eta, hard.phi, hard.et);
    yield { event: generated, hard: { towerIndex: Int32Array.from(binned.towerIndex), towerEt: Float64Array.from(binned.towerEt) } };
  }
}

function generateOne(
  tables: GridTables, settings: GeneratorSettings, random: () => number, event: number,
  hard?: { eta: number[]; phi: number[]; et: number[] },
): GeneratedEvent {
  const { etaMin, etaMax } = tables.grid;
  const eta: number[] = [];
  const phi: number[] = [];
  const et: number[] = [];
  const etaSpan = etaMax - etaMin;

  // hard jets: falling spectrum above 25 GeV, axes away from the acceptance edge
  const hardJets = 1 + Math.floor(random() * (settings.maxHardJets ?? 4));
  for (let jet = 0; jet < hardJets; jet++) {
    const jetPt = 25 + exponential(random, 70);
    const axisEta = etaMin + etaSpan * (0.06 + 0.88 * random());
    const axisPhi = 2 * Math.PI * random();
    const coreFraction = 0.3 + 0.3 * random();
    eta.push(axisEta);
    phi.push(axisPhi);
    et.push(jetPt * coreFraction);
    // the rest in a shower: angles exponential with a 0.08 scale, energies shared evenly
    const showerDeposits = 8 + Math.floor(random() * 30);
    const share = (jetPt * (1 - coreFraction)) / showerDeposits;
    for (let k = 0; k < showerDeposits; k++) {
      const angle = exponential(random, 0.08);
      const direction = 2 * Math.PI * random();
      eta.push(axisEta + angle * Math.cos(direction));
      phi.push(axisPhi + angle * Math.sin(direction));
      et.push(share * (0.2 + 1.6 * random()) * Math.exp(-angle / 0.2));
    }
  }

  if (settings.boosted) addBoostedObjects(random, settings.boosted, eta, phi, et, settings.boostedProngs);

  if (hard) {
    hard.eta.push(...eta);
    hard.phi.push(...phi);
    hard.et.push(...et);
  }

  // pileup: soft interactions spread over the grid
  const meanPileup = settings.pileupMax === undefined
    ? settings.pileup
    : settings.pileup + (settings.pileupMax - settings.pileup) * random();
  const interactions = poisson(random, meanPileup);
  for (let n = 0; n < interactions; n++) {
    const deposits = poisson(random, PILEUP_DEPOSITS_MEAN);
    for (let k = 0; k < deposits; k++) {
      eta.push(etaMin + etaSpan * random());
      phi.push(2 * Math.PI * random());
      et.push(exponential(random, PILEUP_ET_MEAN_GEV));
    }
  }

  if (settings.raw) {
    return {
      event, towerIndex: new Int32Array(0), towerEt: new Float64Array(0),
      depositEta: Float64Array.from(eta), depositPhi: Float64Array.from(phi), depositEt: Float64Array.from(et),
    };
  }

  const binned = binDeposits(tables, eta, phi, et);
  // noise: on every occupied tower, plus noise-only hits on a few empty ones
  const occupied = new Uint8Array(tables.towerTotal);
  const towerIndex: number[] = [];
  const towerEt: number[] = [];
  for (let k = 0; k < binned.towerIndex.length; k++) {
    occupied[binned.towerIndex[k]] = 1;
    towerIndex.push(binned.towerIndex[k]);
    towerEt.push(binned.towerEt[k] + NOISE_SIGMA_GEV * gaussian(random));
  }
  const noiseHits = poisson(random, NOISE_HIT_FRACTION * tables.towerTotal);
  for (let n = 0; n < noiseHits; n++) {
    const t = Math.floor(random() * tables.towerTotal);
    if (occupied[t]) continue;
    occupied[t] = 1;
    towerIndex.push(t);
    towerEt.push(NOISE_SIGMA_GEV * gaussian(random));
  }
  return {
    event, towerIndex: Int32Array.from(towerIndex), towerEt: Float64Array.from(towerEt),
    depositEta: new Float64Array(0), depositPhi: new Float64Array(0), depositEt: new Float64Array(0),
  };
}
