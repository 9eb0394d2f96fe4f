// The pileup settings of a jets file header (message PileupSettings in proto/jetlag.proto,
// field 7 of ClusterSettings): which of the steps of clustering-spec.md sections 8-10 made the
// jets. A header without it means none ran, as in files written before these steps existed.

import { DEFAULT_PILEUP_SETTINGS, type PileupSettings } from '../types.js';
import { ProtoWriter, WireCursor, WIRE_FIXED64, WIRE_VARINT } from './wire.js';

/** enum RhoEstimator */
const RHO_NONE = 0;
const RHO_PATCHES = 1;
const RHO_KT_JETS = 2;

export function encodePileupSettings(pileup: PileupSettings): Uint8Array {
  const out = new ProtoWriter(64)
    .uintField(1, pileup.areas ? 1 : 0)
    .doubleField(2, pileup.ghostEt);
  const rho = pileup.rho;
  if (rho?.kind === 'patches') {
    out.uintField(3, RHO_PATCHES).uintField(4, rho.patch.etaRows).uintField(5, rho.patch.phiColumns);
  } else if (rho?.kind === 'kt') {
    out.uintField(3, RHO_KT_JETS).doubleField(6, rho.radius);
  }
  out.uintField(7, pileup.subtract ? 1 : 0);
  if (pileup.softKiller) out.uintField(8, pileup.softKiller.etaRows).uintField(9, pileup.softKiller.phiColumns);
  return out.finish();
}

/** Reads the message's fields up to `end`; throws Error("at record byte N: ...") on a broken one. */
export function decodePileupSettings(cursor: WireCursor, end: number): PileupSettings {
  let areas = 0;
  let ghostEt = 0;
  let rhoCode = RHO_NONE;
  let rhoAt = 0;
  let rhoEta = 0;
  let rhoPhi = 0;
  let rhoRadius = 0;
  let subtract = 0;
  let killEta = 0;
  let killPhi = 0;
  // fields of a sub-message must end inside it
  const outerEnd = cursor.end;
  cursor.end = end;
  while (cursor.pos < end) {
    const tag = cursor.readTag();
    switch (tag >>> 3) {
      case 1: cursor.expect(tag, WIRE_VARINT, 'pileup.areas'); areas = cursor.readVarint(); break;
      case 2: cursor.expect(tag, WIRE_FIXED64, 'pileup.ghost_et'); ghostEt = cursor.readDouble(); break;
      case 3: cursor.expect(tag, WIRE_VARINT, 'pileup.rho'); rhoAt = cursor.fieldStart; rhoCode = cursor.readVarint(); break;
      case 4: cursor.expect(tag, WIRE_VARINT, 'pileup.rho_patch_eta'); rhoEta = cursor.readVarint(); break;
      case 5: cursor.expect(tag, WIRE_VARINT, 'pileup.rho_patch_phi'); rhoPhi = cursor.readVarint(); break;
      case 6: cursor.expect(tag, WIRE_FIXED64, 'pileup.rho_kt_radius'); rhoRadius = cursor.readDouble(); break;
      case 7: cursor.expect(tag, WIRE_VARINT, 'pileup.subtract'); subtract = cursor.readVarint(); break;
      case 8: cursor.expect(tag, WIRE_VARINT, 'pileup.softkiller_patch_eta'); killEta = cursor.readVarint(); break;
      case 9: cursor.expect(tag, WIRE_VARINT, 'pileup.softkiller_patch_phi'); killPhi = cursor.readVarint(); break;
      default: cursor.skip(tag & 7);
    }
  }
  cursor.end = outerEnd;
  if (rhoCode !== RHO_NONE && rhoCode !== RHO_PATCHES && rhoCode !== RHO_KT_JETS) {
    cursor.fail(rhoAt, `pileup.rho has unknown estimator ${rhoCode} (expected 0 none, 1 patches or 2 kt jets)`);
  }
  // sizes and radii are checked against the grid where the settings are used (checkPileupSettings)
  return {
    areas: areas !== 0,
    // proto3 leaves 0 unwritten; 0 is no usable ghost et, so it reads as the default
    ghostEt: ghostEt === 0 ? DEFAULT_PILEUP_SETTINGS.ghostEt : ghostEt,
    rho: rhoCode === RHO_PATCHES ? { kind: 'patches', patch: { etaRows: rhoEta, phiColumns: rhoPhi } }
      : rhoCode === RHO_KT_JETS ? { kind: 'kt', radius: rhoRadius } : null,
    subtract: subtract !== 0,
    softKiller: killEta !== 0 || killPhi !== 0 ? { etaRows: killEta, phiColumns: killPhi } : null,
  };
}
