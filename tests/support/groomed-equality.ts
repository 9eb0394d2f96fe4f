// Bit-exact comparison of grooming's rows (clustering-spec.md section 12 fixes every order of
// operations): every double identical by Object.is, every count equal.

import type { JetSet } from '../../host/types.js';

const DOUBLES = ['px', 'py', 'pz', 'energy', 'pt', 'rapidity', 'phi', 'mass'] as const;

/** null when the trim and softDrop rows of a and b are identical, else the first difference */
export function firstGroomedDifference(a: JetSet, b: JetSet): string | null {
  for (const groomer of ['trim', 'softDrop'] as const) {
    const rowsA = a[groomer];
    const rowsB = b[groomer];
    if (!rowsA || !rowsB) {
      if (rowsA || rowsB) return `${groomer} present on one side only`;
      continue;
    }
    if (rowsA.pt.length !== rowsB.pt.length) return `${groomer} rows ${rowsA.pt.length} vs ${rowsB.pt.length}`;
    const extra = groomer === 'trim' ? (['subjets'] as const) : (['zg', 'deltaRg'] as const);
    for (let k = 0; k < rowsA.pt.length; k++) {
      for (const field of [...DOUBLES, 'towerCount', ...extra] as const) {
        const x = (rowsA as unknown as Record<string, ArrayLike<number>>)[field][k];
        const y = (rowsB as unknown as Record<string, ArrayLike<number>>)[field][k];
        if (!Object.is(x, y)) return `jet ${k} ${groomer} ${field} ${x} vs ${y}`;
      }
    }
  }
  return null;
}
