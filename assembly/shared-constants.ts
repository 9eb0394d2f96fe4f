// The numbers the host mirrors (host/clustering/engine.ts ENGINE_OK, ENGINE_INDEX_OUTSIDE,
// ENGINE_INDEX_REPEATED and its REGION table; host/clustering/grid.ts MIN_ET). index.ts exports
// them as wasm globals, and tests/engine-constants.test.ts reads them from an instance and checks
// that the host's copies agree. The host keeps its own copies, rather than reading these at run
// time, so that it can still drive builds from before they were exported (bench/pair.bench.ts).
// They are immutable globals with constant values: the optimiser folds them into the code as it
// did the literals.

/** towers with et below this are dropped before clustering (clustering-spec.md section 2) */
export const MIN_ET: f64 = 1e-150;

// per-event status (outStatus): an event with a bad index gets no jets
export const STATUS_OK: i32 = 0;
export const STATUS_INDEX_OUTSIDE: i32 = -1;
export const STATUS_INDEX_REPEATED: i32 = -2;

// region ids of index.ts region(): the regions the host reads or writes (layout.ts)
export const REGION_ETA_CENTRE: i32 = 0;
export const REGION_SINH_ETA: i32 = 1;
export const REGION_COSH_ETA: i32 = 2;
export const REGION_PHI_CENTRE: i32 = 3;
export const REGION_COS_PHI: i32 = 4;
export const REGION_SIN_PHI: i32 = 5;
export const REGION_IN_INDEX: i32 = 6;
export const REGION_IN_ET: i32 = 7;
export const REGION_IN_START: i32 = 8;
export const REGION_OUT_JET_START: i32 = 9;
export const REGION_OUT_NS: i32 = 10;
export const REGION_OUT_CLUSTERED: i32 = 11;
export const REGION_OUT_STATUS: i32 = 12;
export const REGION_OUT_PX: i32 = 13;
export const REGION_OUT_PY: i32 = 14;
export const REGION_OUT_PZ: i32 = 15;
export const REGION_OUT_E: i32 = 16;
export const REGION_OUT_PT: i32 = 17;
export const REGION_OUT_Y: i32 = 18;
export const REGION_OUT_PHI: i32 = 19;
export const REGION_OUT_MASS: i32 = 20;
export const REGION_OUT_TOWER_COUNT: i32 = 21;
export const REGION_OUT_TOWER_START: i32 = 22;
export const REGION_OUT_TOWERS: i32 = 23;
export const REGION_OUT_JET_INDEX: i32 = 24;
// grooming's regions (grooming.ts), mirrored in host/clustering/grooming/engine-groomer.ts
export const GROOM_REGION_JET_PT: i32 = 25;
export const GROOM_REGION_PX: i32 = 26;
export const GROOM_REGION_PY: i32 = 27;
export const GROOM_REGION_PZ: i32 = 28;
export const GROOM_REGION_ENERGY: i32 = 29;
export const GROOM_REGION_PT: i32 = 30;
export const GROOM_REGION_RAPIDITY: i32 = 31;
export const GROOM_REGION_PHI: i32 = 32;
export const GROOM_REGION_MASS: i32 = 33;
export const GROOM_REGION_TOWERS: i32 = 34;
export const GROOM_REGION_SUBJETS: i32 = 35;
export const GROOM_REGION_ZG: i32 = 36;
export const GROOM_REGION_DELTA_RG: i32 = 37;
// grooming modes (grooming.ts configureGroomer)
export const GROOM_TRIM: i32 = 1;
export const GROOM_SOFT_DROP: i32 = 2;
