// Shared shapes of the host. Data flows one way:
//   file -> records -> batches -> workers -> results -> summary -> report
// Everything numeric and per-event is a flat typed array; objects only at the edges.

/** Calorimeter grid geometry (clustering-spec.md section 1). */
export interface Grid {
  etaMin: number;
  etaMax: number;
  etaBins: number;
  phiBins: number;
}

export const DEFAULT_GRID: Readonly<Grid> = Object.freeze({ etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 });

export type Recombination = 'e' | 'wta';

/** Algorithm settings shared by every clusterer. */
export interface ClusterSettings {
  /** generalised-kt exponent: -1 anti-kt, 0 Cambridge/Aachen, 1 kt */
  p: number;
  radius: number;
  /** GeV; final jets with pt below are not reported */
  ptMin: number;
  /** GeV; towers with et <= threshold never enter */
  threshold: number;
  recombination: Recombination;
}

export const DEFAULT_SETTINGS: Readonly<ClusterSettings> = Object.freeze({
  p: -1,
  radius: 0.4,
  ptMin: 0,
  threshold: 0,
  recombination: 'e' as Recombination,
});

/**
 * One event of pre-binned towers: towerIndex[k] is the flat index ieta * phiBins + iphi,
 * towerEt[k] its transverse energy in GeV. Input order is kept (validation reports the first
 * bad tower in input order).
 */
export interface TowerEvent {
  event: number;
  towerIndex: Int32Array;
  towerEt: Float64Array;
}

/**
 * Final jets of one event, in the spec's output order (decreasing pt, ties to smaller index).
 * Jet k's constituents are towers[towerStart[k] .. towerStart[k] + towerCount[k]), increasing;
 * its four-vector, pt, y, phi and mass are the fields it shares with a groomed row.
 */
export interface JetSet extends GroomedFourVectors {
  count: number;
  towerStart: Int32Array;
  towers: Int32Array;
  /** set only when pileup steps ran (spec part two, sections 8-10) */
  pileup?: PileupValues;
  /** set only when trimming ran (spec section 12); row k belongs to jet k */
  trim?: TrimmedJets;
  /** set only when soft drop ran (spec section 12); row k belongs to jet k */
  softDrop?: SoftDropJets;
}

/**
 * What grooming (spec section 12) makes of each reported jet: one row per jet of the JetSet, in
 * its order. The groomed four-vector, its pt, y, phi, mass, and the towers it keeps.
 */
export interface GroomedFourVectors {
  px: Float64Array;
  py: Float64Array;
  pz: Float64Array;
  energy: Float64Array;
  pt: Float64Array;
  rapidity: Float64Array;
  phi: Float64Array;
  mass: Float64Array;
  towerCount: Int32Array;
}

/** Trimming's rows: also the number of kept subjets (0: the trimmed jet is empty, all values 0). */
export interface TrimmedJets extends GroomedFourVectors {
  subjets: Int32Array;
}

/** Soft drop's rows: also zg and Rg, the z and dR of the step that stopped (0 for one tower). */
export interface SoftDropJets extends GroomedFourVectors {
  zg: Float64Array;
  deltaRg: Float64Array;
}

/** Trimming (spec section 12, `trim:RSUB:FCUT`). */
export interface TrimSettings {
  /** RSUB: kt re-clustering radius of the subjets */
  subjetRadius: number;
  /** FCUT: a subjet is kept when its pt >= FCUT * the jet's pt */
  ptFraction: number;
}

/** Soft drop (spec section 12, `softdrop:ZCUT:BETA`). */
export interface SoftDropSettings {
  zCut: number;
  beta: number;
}

/** Grooming of each reported jet (spec section 12); each groomer off when null. */
export interface GroomingSettings {
  trim: TrimSettings | null;
  softDrop: SoftDropSettings | null;
}

export const NO_GROOMING: Readonly<GroomingSettings> = Object.freeze({ trim: null, softDrop: null });

/** A patch of towers (spec section 9): `etaRows` rows by `phiColumns` columns of the grid. */
export interface PatchSize {
  etaRows: number;
  phiColumns: number;
}

/** How ρ is estimated (spec section 9). */
export type RhoEstimator = { kind: 'patches'; patch: PatchSize } | { kind: 'kt'; radius: number };

/** The pileup steps around the clustering (spec part two, sections 8-10); each off unless set. */
export interface PileupSettings {
  /** section 8: ghost towers on empty cells, jet areas */
  areas: boolean;
  /** GeV; et of each ghost tower, in [1e-120, 1e-60] */
  ghostEt: number;
  /** section 9: the ρ estimator; null: none (subtraction then uses patches 5:5) */
  rho: RhoEstimator | null;
  /** section 9: subtract ρ · area from every jet (needs areas) */
  subtract: boolean;
  /** section 10: SoftKiller's patch size; null: off */
  softKiller: PatchSize | null;
}

export const DEFAULT_PILEUP_SETTINGS: Readonly<PileupSettings> = Object.freeze({
  areas: false,
  ghostEt: 1e-100,
  rho: null,
  subtract: false,
  softKiller: null,
});

/**
 * What the pileup steps add to one event's jets. Per event: `rho` (GeV per unit of eta-phi
 * area, 0 when not estimated), `etCut` (GeV, 0 without SoftKiller), `killed` (towers SoftKiller
 * removed), `subtractedAway` (jets at or below zero after subtraction). Per jet, row k
 * belonging to the JetSet's jet k: `ghosts` (ghost constituents, 0 without areas), `area`
 * (0 without areas) and `ptRaw` (pt before subtraction; equal to pt without it).
 */
export interface PileupValues {
  rho: number;
  etCut: number;
  killed: number;
  subtractedAway: number;
  ghosts: Int32Array;
  area: Float64Array;
  ptRaw: Float64Array;
}

/** What happened to the towers of one event before clustering. */
export interface TowerCounts {
  /** towers (or binned deposits) offered */
  offered: number;
  /** dropped by the threshold or as too small (et < 1e-150) */
  belowThreshold: number;
  /** raw deposits outside the grid's eta acceptance */
  outsideAcceptance: number;
  /** towers that entered clustering */
  clustered: number;
}

/**
 * Any clusterer of the project. Input: one valid event's towers in any order, before the
 * threshold (the clusterer applies threshold and ordering itself, spec sections 1 and 4).
 */
export interface Clusterer {
  readonly name: string;
  readonly settings: ClusterSettings;
  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet;
}
