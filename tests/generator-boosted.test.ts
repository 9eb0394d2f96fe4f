// The toy generator's boosted objects (host/generator/boosted.ts, invented data): each decays
// to two or three prongs whose summed four-momentum has the set mass, a few towers apart, and
// asking for none leaves the files of a seed as they were. The invariant mass of massless
// deposits, m^2 = E^2 - |p|^2 with E = et cosh(eta), is the textbook formula (common practice).

import { join } from 'node:path';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { addBoostedObjects, BOOSTED_THREE_PRONG_MASS_GEV, BOOSTED_TWO_PRONG_MASS_GEV } from '../host/generator/boosted.js';
import { makeRandom } from '../host/random.js';
import { main as generate } from '../host/cli/commands/generate.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('generator-boosted');

function invariantMass(eta: number[], phi: number[], et: number[]): number {
  let e = 0, px = 0, py = 0, pz = 0;
  for (let k = 0; k < et.length; k++) {
    e += et[k] * Math.cosh(eta[k]);
    px += et[k] * Math.cos(phi[k]);
    py += et[k] * Math.sin(phi[k]);
    pz += et[k] * Math.sinh(eta[k]);
  }
  return Math.sqrt(Math.max(0, e * e - px * px - py * py - pz * pz));
}

describe('boosted objects of the toy generator', () => {
  it('have the set mass (within the narrow showers\' smearing) and prongs a few towers apart', () => {
    const random = makeRandom(4);
    const masses = { 2: [] as number[], 3: [] as number[] };
    const widest: number[] = [];
    for (let n = 0; n < 400; n++) {
      const eta: number[] = [], phi: number[] = [], et: number[] = [];
      addBoostedObjects(random, 1, eta, phi, et);
      // each prong: a core deposit then its shower of 4
      const prongs = et.length / 5;
      expect([2, 3]).toContain(prongs);
      masses[prongs as 2 | 3].push(invariantMass(eta, phi, et));
      let wide = 0;
      for (let a = 0; a < prongs; a++) {
        for (let b = a + 1; b < prongs; b++) {
          let dphi = Math.abs(phi[5 * a] - phi[5 * b]);
          if (dphi > Math.PI) dphi = 2 * Math.PI - dphi;
          wide = Math.max(wide, Math.hypot(eta[5 * a] - eta[5 * b], dphi));
        }
      }
      widest.push(wide);
    }
    // the default grid's towers are 0.1 x 0.098: at least about two towers between the widest prongs
    widest.sort((x, y) => x - y);
    expect(widest[0]).toBeGreaterThan(0.15);
    expect(widest[Math.floor(0.5 * widest.length)]).toBeGreaterThan(0.3);
    expect(widest[Math.floor(0.5 * widest.length)]).toBeLessThan(0.7);
    expect(widest[Math.floor(0.9 * widest.length)]).toBeLessThan(1.0);
    const mean = (values: number[]) => values.reduce((s, v) => s + v, 0) / values.length;
    expect(masses[2].length).toBeGreaterThan(100);
    expect(masses[3].length).toBeGreaterThan(100);
    expect(Math.abs(mean(masses[2]) / BOOSTED_TWO_PRONG_MASS_GEV - 1)).toBeLessThan(0.05);
    expect(Math.abs(mean(masses[3]) / BOOSTED_THREE_PRONG_MASS_GEV - 1)).toBeLessThan(0.05);
  });

  it('leave the file of a seed unchanged when none are asked for, and change it when some are', async () => {
    const paths = ['plain.pb', 'zero.pb', 'two.pb'].map((name) => join(dir, name));
    const common = ['--events', '3', '--pileup', '10', '--seed', '9', '--label', 'x', '-q'];
    expect(await generate([...common, '--out', paths[0]], fakeIo().io)).toBe(0);
    expect(await generate([...common, '--boosted', '0', '--out', paths[1]], fakeIo().io)).toBe(0);
    expect(await generate([...common, '--boosted', '2', '--out', paths[2]], fakeIo().io)).toBe(0);
    const bytes = paths.map((path) => readFileSync(path));
    expect(bytes[1].equals(bytes[0])).toBe(true);
    expect(bytes[2].equals(bytes[0])).toBe(false);
  });

  it('refuses a count out of range in one usage line', async () => {
    await expect(generate(['--boosted', '101', '--out', join(dir, 'x.pb')], fakeIo().io)).rejects.toThrow('generate: --boosted must be in 0..100, got 101');
  });
});
