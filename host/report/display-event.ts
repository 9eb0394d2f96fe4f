// The data of an event display, read again from the files a run or a compare read: the event's
// towers from EVENTS, its jets from the reference (with their towers; the engine gives the same
// jets bit for bit, spec section 7 aside), and in a compare the candidate's jets from CANDIDATE.
// Each file is streamed up to the event and closed; nothing else is kept.

import { openEventSource } from '../input/event-source.js';
import { EventTowerReader } from '../input/event-towers.js';
import { openCandidate } from '../input/candidate-reader.js';
import { ReferenceClusterer } from '../clustering/reference.js';
import { InputError } from '../errors.js';
import type { ClusterSettings, Grid, JetSet } from '../types.js';
import type { DisplayEvent, DisplayJet } from './event-display.js';

/** Jets drawn per panel, hardest first: more than this turns the display into noise. */
export const DISPLAY_JETS_MAX = 12;

export interface EventTowersCopy {
  grid: Grid;
  towerIndex: Int32Array;
  towerEt: Float64Array;
}

/** The towers of one event, or null when the file has no valid event of that number. */
export async function readEventTowers(path: string, event: number, csvGrid?: Grid): Promise<EventTowersCopy | null> {
  const source = await openEventSource(path, { grid: csvGrid });
  const reader = new EventTowerReader(source.header.grid);
  try {
    for await (const record of source.records) {
      const towers = reader.read(record.bytes);
      if (towers.event === undefined || towers.event < event) continue;
      if (towers.event > event || !towers.ok) return null;
      return { grid: { ...source.header.grid }, towerIndex: Int32Array.from(towers.towerIndex), towerEt: Float64Array.from(towers.towerEt) };
    }
    return null;
  } finally {
    await source.records.return(undefined);
  }
}

function pseudorapidity(pt: number, pz: number): number {
  return Math.asinh(pz / pt);
}

/** The reference's jets of the event above ptMin, with their towers, hardest first. */
export function referenceJets(towers: EventTowersCopy, settings: ClusterSettings): { jets: DisplayJet[]; total: number } {
  const clusterer = new ReferenceClusterer(towers.grid, settings);
  clusterer.withTowers = true;
  const set: JetSet = clusterer.cluster(towers.towerIndex, towers.towerEt);
  const jets: DisplayJet[] = [];
  for (let k = 0; k < set.count; k++) {
    if (set.pt[k] < settings.ptMin) continue;
    const start = set.towerStart[k];
    jets.push({ pt: set.pt[k], eta: pseudorapidity(set.pt[k], set.pz[k]), phi: set.phi[k], towers: set.towers.slice(start, start + set.towerCount[k]) });
  }
  jets.sort((a, b) => b.pt - a.pt);
  return { jets: jets.slice(0, DISPLAY_JETS_MAX), total: jets.length };
}

/** The candidate's jets of the event above ptMin (no towers: drawn as circles), hardest first. */
export async function candidateJets(path: string, event: number, ptMin: number): Promise<{ jets: DisplayJet[]; total: number }> {
  const candidate = await openCandidate(path);
  try {
    for await (const item of candidate.events) {
      if (item.event === null || item.event < event) continue;
      if (item.event > event || item.error !== '') break;
      const jets: DisplayJet[] = [];
      for (let k = 0; k < item.count; k++) {
        if (!(item.pt[k] >= ptMin)) continue;
        const transverseMass = Math.sqrt(item.pt[k] * item.pt[k] + item.mass[k] * item.mass[k]);
        const pz = transverseMass * Math.sinh(item.rapidity[k]);
        const phi = ((item.phi[k] % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI);
        jets.push({ pt: item.pt[k], eta: pseudorapidity(item.pt[k], pz), phi, towers: null });
      }
      jets.sort((a, b) => b.pt - a.pt);
      return { jets: jets.slice(0, DISPLAY_JETS_MAX), total: jets.length };
    }
    return { jets: [], total: 0 };
  } finally {
    await candidate.events.return(undefined as never);
  }
}

/** A run's event: the towers and the reference's jets. */
export async function runDisplay(path: string, event: number, settings: ClusterSettings, why: string, csvGrid?: Grid): Promise<DisplayEvent> {
  const towers = await readEventTowers(path, event, csvGrid);
  if (towers === null) throw new InputError(path, `no valid event ${event} to display`);
  const { jets, total } = referenceJets(towers, settings);
  return { event, why, grid: towers.grid, radius: settings.radius, towerIndex: towers.towerIndex, towerEt: towers.towerEt, panels: [{ title: 'jets', jets, jetsTotal: total }] };
}

/** A compare's event: the towers, the reference's jets beside the candidate's. */
export async function compareDisplay(eventsPath: string, candidatePath: string, event: number, settings: ClusterSettings, why: string, csvGrid?: Grid): Promise<DisplayEvent> {
  const towers = await readEventTowers(eventsPath, event, csvGrid);
  if (towers === null) throw new InputError(eventsPath, `no valid event ${event} to display`);
  const reference = referenceJets(towers, settings);
  const candidate = await candidateJets(candidatePath, event, settings.ptMin);
  return {
    event, why, grid: towers.grid, radius: settings.radius, towerIndex: towers.towerIndex, towerEt: towers.towerEt,
    panels: [
      { title: 'reference jets', jets: reference.jets, jetsTotal: reference.total },
      { title: 'candidate jets', jets: candidate.jets, jetsTotal: candidate.total },
    ],
  };
}
