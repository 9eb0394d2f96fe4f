// Bad pileup settings (clustering-spec.md sections 8-10): one clear usage error line each.

import { describe, expect, it } from 'vitest';
import { UsageError } from '../host/errors.js';
import { PileupReferenceClusterer } from '../host/clustering/pileup/chain.js';
import { checkPileupSettings, parsePatchSize, parseRhoEstimator } from '../host/clustering/pileup/settings.js';
import { DEFAULT_GRID, DEFAULT_PILEUP_SETTINGS, DEFAULT_SETTINGS, type ClusterSettings, type Grid, type PileupSettings } from '../host/types.js';

function usageErrorOf(run: () => unknown): UsageError {
  try {
    run();
  } catch (error) {
    expect(error).toBeInstanceOf(UsageError);
    expect((error as Error).message).not.toContain('\n');
    return error as UsageError;
  }
  throw new Error('expected a usage error');
}

function check(pileup: Partial<PileupSettings>, settings: Partial<ClusterSettings> = {}, grid: Grid = DEFAULT_GRID): string {
  return usageErrorOf(() => checkPileupSettings(grid, { ...DEFAULT_SETTINGS, ...settings }, { ...DEFAULT_PILEUP_SETTINGS, ...pileup }, 'cluster')).message;
}

describe('pileup settings', () => {
  it('accept the defaults and every step on at once', () => {
    expect(() => checkPileupSettings(DEFAULT_GRID, DEFAULT_SETTINGS, DEFAULT_PILEUP_SETTINGS, 'cluster')).not.toThrow();
    const all: PileupSettings = { areas: true, ghostEt: 1e-120, rho: { kind: 'kt', radius: 2 }, subtract: true, softKiller: { etaRows: 50, phiColumns: 64 } };
    expect(() => checkPileupSettings(DEFAULT_GRID, { ...DEFAULT_SETTINGS, p: 1, radius: 2 }, all, 'cluster')).not.toThrow();
  });

  it('refuse areas with |p| > 1', () => {
    expect(check({ areas: true }, { p: 1.5 })).toBe('cluster: --areas needs -1 <= p <= 1 (ghost weights overflow beyond), got p = 1.5');
    expect(check({ areas: true }, { p: -2 })).toContain('got p = -2');
  });

  it('refuse areas with R > 2 and a grid beyond |eta| 10', () => {
    expect(check({ areas: true }, { radius: 2.5 })).toBe('cluster: --areas needs a radius R <= 2, got 2.5');
    expect(check({ areas: true }, {}, { ...DEFAULT_GRID, etaMin: -12 })).toBe('cluster: --areas needs a grid within |eta| <= 10, got [-12, 2.5)');
    expect(check({ rho: { kind: 'kt', radius: 0.4 } }, {}, { ...DEFAULT_GRID, etaMax: 10.5 })).toContain('--rho kt needs a grid within |eta| <= 10');
  });

  it('refuse a ghost et outside [1e-120, 1e-60]', () => {
    expect(check({ areas: true, ghostEt: 1e-50 })).toBe('cluster: --ghost-et must lie in [1e-120, 1e-60] GeV, got 1e-50');
    expect(check({ areas: true, ghostEt: 1e-130 })).toContain('got 1e-130');
    expect(check({ areas: true, ghostEt: NaN })).toContain('got NaN');
  });

  it('refuse patch sizes of 0 or larger than the grid', () => {
    expect(check({ softKiller: { etaRows: 0, phiColumns: 5 } })).toBe('cluster: --softkiller patch sizes must be 1..50 towers in eta and 1..64 in phi, got 0:5');
    expect(check({ rho: { kind: 'patches', patch: { etaRows: 5, phiColumns: 65 } } })).toContain('--rho patches patch sizes must be 1..50 towers in eta and 1..64 in phi, got 5:65');
    expect(check({ areas: true, subtract: true }, {}, { ...DEFAULT_GRID, etaBins: 4 })).toContain('--subtract (ρ from patches 5:5 by default)');
  });

  it('refuse subtraction without areas', () => {
    expect(check({ subtract: true, rho: { kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } } })).toBe('cluster: --subtract needs --areas (ρ · area is subtracted from each jet)');
  });

  it('refuse a kt estimator with RR outside (0, 2]', () => {
    expect(check({ rho: { kind: 'kt', radius: 0 } })).toBe('cluster: --rho kt:RR needs 0 < RR <= 2, got 0');
    expect(check({ rho: { kind: 'kt', radius: 3 } })).toContain('got 3');
  });

  it('are checked when the reference pileup clusterer is made', () => {
    usageErrorOf(() => new PileupReferenceClusterer(DEFAULT_GRID, DEFAULT_SETTINGS, { ...DEFAULT_PILEUP_SETTINGS, subtract: true }, 'run'));
  });
});

describe('pileup setting texts', () => {
  it('read patches, kt and patch sizes, with their defaults', () => {
    expect(parseRhoEstimator('patches', 'run')).toEqual({ kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } });
    expect(parseRhoEstimator('patches:3:7', 'run')).toEqual({ kind: 'patches', patch: { etaRows: 3, phiColumns: 7 } });
    expect(parseRhoEstimator('kt', 'run')).toEqual({ kind: 'kt', radius: 0.4 });
    expect(parseRhoEstimator('kt:0.6', 'run')).toEqual({ kind: 'kt', radius: 0.6 });
    expect(parsePatchSize('4:6', '--softkiller', 'run')).toEqual({ etaRows: 4, phiColumns: 6 });
  });

  it('refuse anything else with one line naming the option', () => {
    expect(usageErrorOf(() => parseRhoEstimator('median', 'run')).message).toBe('run: --rho must be patches:PE:PP or kt:RR (e.g. patches:5:5, kt:0.4), got "median"');
    expect(usageErrorOf(() => parseRhoEstimator('kt:', 'run')).message).toContain('--rho kt:RR needs a number RR');
    expect(usageErrorOf(() => parseRhoEstimator('patches:5', 'run')).message).toContain('--rho patches needs patch sizes PE:PP');
    expect(usageErrorOf(() => parsePatchSize('5x5', '--softkiller', 'run')).message).toBe('run: --softkiller needs patch sizes PE:PP (towers in eta : towers in phi, e.g. 5:5), got "5x5"');
  });
});
