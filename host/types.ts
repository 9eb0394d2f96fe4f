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
 * Jet k's constituents are towers[towerStart[k] .. towerStart[k] + towerCount[k]), increasing.
 */
export interface JetSet {
  count: number;
  px: Float64Array;
  py: Float64Array;
  pz: Float64Array;
  energy: Float64Array;
  pt: Float64Array;
  rapidity: Float64Array;
  phi: Float64Array;
  mass: Float64Array;
  towerCount: Int32Array;
  towerStart: Int32Array;
  towers: Int32Array;
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
