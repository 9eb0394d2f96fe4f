// The pileup settings' texts and limits (clustering-spec.md sections 8-10). Each bad setting
// is one UsageError line that names the option, the limit and the value given.

import { UsageError } from '../../errors.js';
import { DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type Grid, type PatchSize, type PileupSettings, type RhoEstimator } from '../../types.js';

/** the ghost et's range (section 8): far below any real tower, far above the doubles' floor */
export const GHOST_ET_MIN = 1e-120;
export const GHOST_ET_MAX = 1e-60;
/** areas only for |p| <= 1, R <= 2 and a grid within |eta| <= 10: beyond, ghost weights and rapidities leave the doubles */
export const AREA_MAX_RADIUS = 2;
export const AREA_MAX_ABS_ETA = 10;
export const DEFAULT_PATCH: Readonly<PatchSize> = Object.freeze({ etaRows: 5, phiColumns: 5 });
export const DEFAULT_KT_RHO_RADIUS = 0.4;

/** `PE:PP`, two positive integers (sizes beyond the grid are caught by checkPileupSettings) */
export function parsePatchSize(text: string, option: string, command: string): PatchSize {
  const match = /^(\d+):(\d+)$/.exec(text);
  if (!match) throw new UsageError(`${command}: ${option} needs patch sizes PE:PP (towers in eta : towers in phi, e.g. 5:5), got ${JSON.stringify(text)}`);
  return { etaRows: Number(match[1]), phiColumns: Number(match[2]) };
}

/** `patches`, `patches:PE:PP`, `kt` or `kt:RR` (section 9) */
export function parseRhoEstimator(text: string, command: string): RhoEstimator {
  if (text === 'patches') return { kind: 'patches', patch: { ...DEFAULT_PATCH } };
  if (text.startsWith('patches:')) return { kind: 'patches', patch: parsePatchSize(text.slice('patches:'.length), '--rho patches', command) };
  if (text === 'kt') return { kind: 'kt', radius: DEFAULT_KT_RHO_RADIUS };
  if (text.startsWith('kt:')) {
    const radiusText = text.slice('kt:'.length);
    const radius = Number(radiusText);
    if (radiusText.trim() === '' || !Number.isFinite(radius)) {
      throw new UsageError(`${command}: --rho kt:RR needs a number RR, got ${JSON.stringify(text)}`);
    }
    return { kind: 'kt', radius };
  }
  throw new UsageError(`${command}: --rho must be patches:PE:PP or kt:RR (e.g. patches:5:5, kt:0.4), got ${JSON.stringify(text)}`);
}

/** Throws one UsageError line for the first setting the chain cannot run with. */
export function checkPileupSettings(grid: Grid, settings: ClusterSettings, pileup: PileupSettings, command: string): void {
  const { ghostEt } = pileup;
  if (!(ghostEt >= GHOST_ET_MIN && ghostEt <= GHOST_ET_MAX)) {
    throw new UsageError(`${command}: --ghost-et must lie in [${GHOST_ET_MIN}, ${GHOST_ET_MAX}] GeV, got ${ghostEt}`);
  }
  if (pileup.areas) {
    if (!(settings.p >= -1 && settings.p <= 1)) {
      throw new UsageError(`${command}: --areas needs -1 <= p <= 1 (ghost weights overflow beyond), got p = ${settings.p}`);
    }
    if (!(settings.radius <= AREA_MAX_RADIUS)) {
      throw new UsageError(`${command}: --areas needs a radius R <= ${AREA_MAX_RADIUS}, got ${settings.radius}`);
    }
    checkGridForGhosts(grid, '--areas', command);
  }
  if (pileup.subtract && !pileup.areas) {
    throw new UsageError(`${command}: --subtract needs --areas (ρ · area is subtracted from each jet)`);
  }
  const rho = pileup.rho;
  if (rho?.kind === 'patches') checkPatchSize(grid, rho.patch, '--rho patches', command);
  if (rho?.kind === 'kt') {
    if (!(rho.radius > 0 && rho.radius <= AREA_MAX_RADIUS)) {
      throw new UsageError(`${command}: --rho kt:RR needs 0 < RR <= ${AREA_MAX_RADIUS}, got ${rho.radius}`);
    }
    checkGridForGhosts(grid, '--rho kt', command);
  }
  if (rho === null && pileup.subtract) checkPatchSize(grid, DEFAULT_PATCH, '--subtract (ρ from patches 5:5 by default)', command);
  if (pileup.softKiller) checkPatchSize(grid, pileup.softKiller, '--softkiller', command);
}

function checkGridForGhosts(grid: Grid, option: string, command: string): void {
  if (!(grid.etaMin >= -AREA_MAX_ABS_ETA && grid.etaMax <= AREA_MAX_ABS_ETA)) {
    throw new UsageError(`${command}: ${option} needs a grid within |eta| <= ${AREA_MAX_ABS_ETA}, got [${grid.etaMin}, ${grid.etaMax})`);
  }
}

function checkPatchSize(grid: Grid, size: PatchSize, option: string, command: string): void {
  const { etaRows, phiColumns } = size;
  const fits = (value: number, limit: number) => Number.isInteger(value) && value >= 1 && value <= limit;
  if (!fits(etaRows, grid.etaBins) || !fits(phiColumns, grid.phiBins)) {
    throw new UsageError(
      `${command}: ${option} patch sizes must be 1..${grid.etaBins} towers in eta and 1..${grid.phiBins} in phi, got ${etaRows}:${phiColumns}`,
    );
  }
}

/** true when any pileup step runs; with none, a clusterer gives the plain results of sections 1-6 */
export function pileupStepsOn(pileup: PileupSettings | null | undefined): pileup is PileupSettings {
  return pileup != null && (pileup.areas || pileup.rho !== null || pileup.subtract || pileup.softKiller !== null);
}

/** The pileup steps in words, for messages and labels: "areas, ρ kt:0.4, subtraction, SoftKiller 5:5"; '' when none runs. */
export function describePileup(pileup: PileupSettings | null | undefined): string {
  if (!pileupStepsOn(pileup)) return '';
  const parts: string[] = [];
  if (pileup.areas) parts.push(pileup.ghostEt === DEFAULT_PILEUP_SETTINGS.ghostEt ? 'areas' : `areas (ghost et ${pileup.ghostEt} GeV)`);
  const rho = pileup.rho;
  if (rho?.kind === 'patches') parts.push(`ρ patches:${rho.patch.etaRows}:${rho.patch.phiColumns}`);
  if (rho?.kind === 'kt') parts.push(`ρ kt:${rho.radius}`);
  if (pileup.subtract) parts.push(rho === null ? 'subtraction (ρ patches:5:5)' : 'subtraction');
  if (pileup.softKiller) parts.push(`SoftKiller ${pileup.softKiller.etaRows}:${pileup.softKiller.phiColumns}`);
  return parts.join(', ');
}
