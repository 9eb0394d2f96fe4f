// Algorithm settings in words, for messages and reports: "anti-kt R=0.4 E-scheme ptmin=20".

import type { ClusterSettings } from '../types.js';

export function describeSettings(settings: ClusterSettings): string {
  const names: Record<number, string> = { [-1]: 'anti-kt', 0: 'Cambridge/Aachen', 1: 'kt' };
  const algorithm = names[settings.p] ?? `generalised kt p=${settings.p}`;
  return `${algorithm} R=${settings.radius} ${settings.recombination === 'e' ? 'E-scheme' : 'winner-take-all'}` +
    `${settings.ptMin > 0 ? ` ptmin=${settings.ptMin}` : ''}${settings.threshold > 0 ? ` threshold=${settings.threshold}` : ''}`;
}
