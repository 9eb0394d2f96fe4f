// Area subtraction (clustering-spec.md section 9): each jet loses ρ times its area of transverse
// momentum. The scalar form used online: the four-vector is scaled, its direction kept (the
// four-vector form of arXiv:0802.1188 is not part of the contract).

export interface SubtractedJet {
  px: number;
  py: number;
  pz: number;
  energy: number;
  pt: number;
  mass: number;
}

/**
 * One jet after subtraction, or null when ptSub = pt - rho * area is at or below zero (the jet
 * is then removed and counted). Otherwise f = ptSub / pt scales px, py, pz, E; pt becomes ptSub;
 * the mass is recomputed from the scaled four-vector as in section 6. y and phi do not change.
 */
export function subtractFromJet(
  px: number,
  py: number,
  pz: number,
  energy: number,
  pt: number,
  area: number,
  rho: number,
): SubtractedJet | null {
  const ptSub = pt - rho * area;
  if (ptSub <= 0) return null;
  const f = ptSub / pt;
  const scaledPx = px * f;
  const scaledPy = py * f;
  const scaledPz = pz * f;
  const scaledEnergy = energy * f;
  const mass = Math.sqrt(Math.max(0, scaledEnergy * scaledEnergy - scaledPx * scaledPx - scaledPy * scaledPy - scaledPz * scaledPz));
  return { px: scaledPx, py: scaledPy, pz: scaledPz, energy: scaledEnergy, pt: ptSub, mass };
}
