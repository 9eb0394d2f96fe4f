// A brute-force window finder written straight from the sentences of clustering-spec.md
// section 11, sharing no code with host/clustering/window-finder.ts: every pair of towers is
// looked at, "in the window" is a distance test (eta rows apart, phi columns apart the short
// way round), so each tower is met once however wide the window.

export interface BruteWindowJet {
  seed: number;
  pt: number;
  towers: number[];
}

export function windowBruteForce(
  phiBins: number,
  towerIndex: ArrayLike<number>,
  towerEt: ArrayLike<number>,
  windowTowers: number,
  seedEt: number,
  threshold = 0,
  ptMin = 0,
): BruteWindowJet[] {
  const half = (windowTowers - 1) / 2;
  const towers: { index: number; et: number }[] = [];
  for (let k = 0; k < towerIndex.length; k++) {
    if (towerEt[k] > threshold) towers.push({ index: towerIndex[k], et: towerEt[k] });
  }
  towers.sort((a, b) => a.index - b.index);
  const inWindow = (centre: number, other: number): boolean => {
    const rowsApart = Math.abs(Math.floor(centre / phiBins) - Math.floor(other / phiBins));
    const columnsApart = Math.abs((centre % phiBins) - (other % phiBins));
    return rowsApart <= half && Math.min(columnsApart, phiBins - columnsApart) <= half;
  };
  const jets: BruteWindowJet[] = [];
  for (const seed of towers) {
    if (seed.et < seedEt) continue;
    const members = towers.filter((u) => inWindow(seed.index, u.index));
    const beaten = members.some((u) => (u.index < seed.index ? u.et >= seed.et : u.index > seed.index && u.et > seed.et));
    if (beaten) continue;
    let pt = 0;
    for (const u of members) pt += u.et; // members are in increasing flat index
    if (pt >= ptMin) jets.push({ seed: seed.index, pt, towers: members.map((u) => u.index) });
  }
  jets.sort((a, b) => (a.pt !== b.pt ? b.pt - a.pt : a.seed - b.seed));
  return jets;
}
