// The groomed columns of a jets CSV (spec section 12), named once for the writer
// (output/groomed-csv.ts) and the candidate reader (input/candidate-csv-groomed.ts): they follow
// the plain (and pileup) columns, trimming's first, each group only when its groomer ran.

export const TRIM_CSV_COLUMNS = 'trimPt,trimY,trimPhi,trimM,trimN,trimSubjets';
export const SOFT_DROP_CSV_COLUMNS = 'softdropPt,softdropY,softdropPhi,softdropM,softdropN,softdropZg,softdropRg';

/** the header endings a groomed jets CSV may have, longest first */
export const GROOMED_CSV_SUFFIXES = [`,${TRIM_CSV_COLUMNS},${SOFT_DROP_CSV_COLUMNS}`, `,${TRIM_CSV_COLUMNS}`, `,${SOFT_DROP_CSV_COLUMNS}`] as const;

/** per groomer, the columns `jetlag compare` reads back: each group starts with pt, y, phi, m */
export const GROOMED_CSV_COMPARED_COLUMNS = {
  trim: { pt: TRIM_CSV_COLUMNS.split(',')[0], mass: TRIM_CSV_COLUMNS.split(',')[3] },
  softdrop: { pt: SOFT_DROP_CSV_COLUMNS.split(',')[0], mass: SOFT_DROP_CSV_COLUMNS.split(',')[3] },
} as const;
