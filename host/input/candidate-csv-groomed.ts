// The groomed pt and mass of a candidate CSV's jets (spec section 12), read from the columns
// `jetlag export` writes after the plain ones (formats/groomed-csv-columns.ts names them):
// one pair of growable columns per groomer the header has, reused from event to event, taken
// into the shape the JSON-lines and jets-file readers give (CandidateGroomed).
// The cells are checked as numbers by the row's own check (candidate-csv.ts) before push.

import { GROOMED_CSV_COMPARED_COLUMNS } from '../formats/groomed-csv-columns.js';
import type { CandidateGroomed } from './candidate-reader.js';

type GroomerKey = keyof typeof GROOMED_CSV_COMPARED_COLUMNS;
const GROOMER_KEYS = Object.keys(GROOMED_CSV_COMPARED_COLUMNS) as GroomerKey[];

class GroomerColumns {
  pt = new Float64Array(16);
  mass = new Float64Array(16);

  constructor(readonly key: GroomerKey, readonly ptField: number, readonly massField: number) {}
}

export class CsvGroomedColumns {
  private readonly groomers: GroomerColumns[] = [];
  private count = 0;

  /** columnNames: the header's fields; jetFields: how many of them belong to the jet (not the event) */
  constructor(columnNames: readonly string[], jetFields: number) {
    for (const key of GROOMER_KEYS) {
      const ptField = columnNames.indexOf(GROOMED_CSV_COMPARED_COLUMNS[key].pt);
      const massField = columnNames.indexOf(GROOMED_CSV_COMPARED_COLUMNS[key].mass);
      if (ptField > 0 && ptField < jetFields && massField > 0 && massField < jetFields) {
        this.groomers.push(new GroomerColumns(key, ptField, massField));
      }
    }
  }

  /** the header has groomed columns */
  get present(): boolean {
    return this.groomers.length > 0;
  }

  /** one row's cells, already checked as finite decimals */
  push(cells: readonly string[]): void {
    for (const groomer of this.groomers) {
      if (this.count === groomer.pt.length) {
        const grow = (a: Float64Array) => { const b = new Float64Array(a.length * 2); b.set(a); return b; };
        groomer.pt = grow(groomer.pt);
        groomer.mass = grow(groomer.mass);
      }
      groomer.pt[this.count] = Number(cells[groomer.ptField]);
      groomer.mass[this.count] = Number(cells[groomer.massField]);
    }
    this.count++;
  }

  /** owned copies of the event's rows (undefined without groomed columns or rows), then empty again */
  take(): CandidateGroomed | undefined {
    const n = this.count;
    this.count = 0;
    if (n === 0 || this.groomers.length === 0) return undefined;
    const out: CandidateGroomed = {};
    for (const groomer of this.groomers) out[groomer.key] = { pt: groomer.pt.slice(0, n), mass: groomer.mass.slice(0, n) };
    return out;
  }

  /** forget the event's rows (an event found invalid) */
  clear(): void {
    this.count = 0;
  }
}
