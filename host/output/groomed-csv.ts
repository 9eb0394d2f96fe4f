// The groomed columns of a jets CSV (spec section 12), appended after the plain (and pileup)
// columns when the jets file header names trimming or soft drop: per jet, the trimmed jet's
// pt, y, phi, m, towers and kept subjets, then the soft-dropped jet's pt, y, phi, m, towers,
// zg and Rg. Numbers in their shortest round-trip form, as every other column.

import { jsonNumber } from '../formats/jets-jsonl.js';
import type { GroomedFourVectors, GroomingSettings, JetSet } from '../types.js';
import { SOFT_DROP_CSV_COLUMNS, TRIM_CSV_COLUMNS } from '../formats/groomed-csv-columns.js';

/** ',' and the groomed column names for the header line, '' without grooming */
export function groomedCsvHeader(grooming: GroomingSettings | undefined): string {
  let text = '';
  if (grooming?.trim) text += `,${TRIM_CSV_COLUMNS}`;
  if (grooming?.softDrop) text += `,${SOFT_DROP_CSV_COLUMNS}`;
  return text;
}

function fourVectorCells(rows: GroomedFourVectors, k: number): string {
  return `,${jsonNumber(rows.pt[k])},${jsonNumber(rows.rapidity[k])},${jsonNumber(rows.phi[k])},${jsonNumber(rows.mass[k])},${rows.towerCount[k]}`;
}

/** the groomed cells of jet k, in groomedCsvHeader's order */
export function groomedCsvCells(jets: JetSet, k: number, grooming: GroomingSettings | undefined): string {
  let text = '';
  if (grooming?.trim && jets.trim) text += `${fourVectorCells(jets.trim, k)},${jets.trim.subjets[k]}`;
  if (grooming?.softDrop && jets.softDrop) text += `${fourVectorCells(jets.softDrop, k)},${jsonNumber(jets.softDrop.zg[k])},${jsonNumber(jets.softDrop.deltaRg[k])}`;
  return text;
}
