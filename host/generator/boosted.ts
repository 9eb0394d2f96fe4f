// Boosted heavy objects for the toy generator (generate.ts): invented data, like the rest of the
// Halden ring. On request (`generate --boosted N`) each event gets N heavy particles of our own
// invention, each decaying to two or three massless prongs, so that large-R jets with a mass
// peak can be groomed (clustering-spec.md section 12). Nothing here is a real particle:
//   two-prong  "H2" of mass BOOSTED_TWO_PRONG_MASS_GEV
//   three-prong "H3" of mass BOOSTED_THREE_PRONG_MASS_GEV
// Each particle: pt drawn uniformly in [BOOSTED_PT_MIN_GEV, BOOSTED_PT_MAX_GEV], rapidity in
// ±BOOSTED_RAPIDITY_MAX, azimuth uniform. The decay is made in the particle's rest frame
// (two prongs back to back along a random direction; three prongs at 120° in a random plane,
// each with energy M/3) and boosted to the lab, so the prongs open by about 2M/pt: 0.3–0.6 at
// these settings, a few towers of the default grid apart. Each prong leaves a core deposit and
// a narrow shower (angle scale BOOSTED_SHOWER_SCALE), so its et sits within a tower or two.
// A toy choice: a decay with a prong close to the boost axis (|cos θ*| > BOOSTED_COS_MAX in the
// rest frame) is drawn again, so that no prong is very soft and the prongs stay within a
// large-R jet (unrestricted, a tenth of the objects spread wider than ΔR = 1.4).

export const BOOSTED_TWO_PRONG_MASS_GEV = 90;
export const BOOSTED_THREE_PRONG_MASS_GEV = 170;
export const BOOSTED_PT_MIN_GEV = 400;
export const BOOSTED_PT_MAX_GEV = 800;
export const BOOSTED_RAPIDITY_MAX = 1.2;
const BOOSTED_SHOWER_SCALE = 0.02;
const SHOWER_DEPOSITS = 4;
const CORE_FRACTION = 0.7;
export const BOOSTED_COS_MAX = 0.8;

/** a random unit vector, uniform on the sphere */
function unitVector(random: () => number, out: Float64Array): void {
  const cosTheta = 2 * random() - 1;
  const sinTheta = Math.sqrt(1 - cosTheta * cosTheta);
  const angle = 2 * Math.PI * random();
  out[0] = sinTheta * Math.cos(angle);
  out[1] = sinTheta * Math.sin(angle);
  out[2] = cosTheta;
}

/** The prongs' momenta in the rest frame: two back to back, or three at 120 degrees in a random plane. */
function restFrameProngs(random: () => number, threeProngs: boolean, mass: number, axis: Float64Array, normal: Float64Array): number[][] {
  const prongs: number[][] = [];
  unitVector(random, axis);
  if (!threeProngs) {
    const p = mass / 2;
    prongs.push([p * axis[0], p * axis[1], p * axis[2]], [-p * axis[0], -p * axis[1], -p * axis[2]]);
    return prongs;
  }
  // a second direction perpendicular to the first spans the decay plane
  unitVector(random, normal);
  const dot = normal[0] * axis[0] + normal[1] * axis[1] + normal[2] * axis[2];
  for (let c = 0; c < 3; c++) normal[c] -= dot * axis[c];
  const length = Math.hypot(normal[0], normal[1], normal[2]) || 1;
  for (let c = 0; c < 3; c++) normal[c] /= length;
  const p = mass / 3;
  for (let k = 0; k < 3; k++) {
    const angle = (2 * Math.PI * k) / 3;
    prongs.push([0, 1, 2].map((c) => p * (Math.cos(angle) * axis[c] + Math.sin(angle) * normal[c])));
  }
  return prongs;
}

/**
 * Adds `count` boosted objects' prong deposits (eta, phi, et) to the event's lists. The order
 * of random draws is fixed, so a seed gives the same file anywhere.
 */
export function addBoostedObjects(random: () => number, count: number, eta: number[], phi: number[], et: number[], prongs?: 2 | 3): void {
  const axis = new Float64Array(3);
  const normal = new Float64Array(3);
  for (let object = 0; object < count; object++) {
    // the draw is made either way, so fixing the prongs leaves every other draw as it was
    const drawnThree = random() < 0.5;
    const threeProngs = prongs === undefined ? drawnThree : prongs === 3;
    const mass = threeProngs ? BOOSTED_THREE_PRONG_MASS_GEV : BOOSTED_TWO_PRONG_MASS_GEV;
    const pt = BOOSTED_PT_MIN_GEV + (BOOSTED_PT_MAX_GEV - BOOSTED_PT_MIN_GEV) * random();
    const rapidity = BOOSTED_RAPIDITY_MAX * (2 * random() - 1);
    const azimuth = 2 * Math.PI * random();
    // the particle's four-momentum in the lab
    const transverseMass = Math.sqrt(pt * pt + mass * mass);
    const px = pt * Math.cos(azimuth);
    const py = pt * Math.sin(azimuth);
    const pz = transverseMass * Math.sinh(rapidity);
    const energy = transverseMass * Math.cosh(rapidity);
    // prong momenta in the rest frame (massless, summing to zero), drawn until none lies
    // within BOOSTED_COS_MAX of the boost axis
    const momentum = Math.hypot(px, py, pz);
    let momenta: number[][] = [];
    let widestCos = Infinity;
    while (widestCos > BOOSTED_COS_MAX) {
      momenta = restFrameProngs(random, threeProngs, mass, axis, normal);
      widestCos = 0;
      for (const [qx, qy, qz] of momenta) {
        widestCos = Math.max(widestCos, Math.abs(qx * px + qy * py + qz * pz) / (Math.hypot(qx, qy, qz) * momentum));
      }
    }
    // boost each prong to the lab: velocity beta = p / E of the particle
    const bx = px / energy;
    const by = py / energy;
    const bz = pz / energy;
    const beta2 = bx * bx + by * by + bz * bz;
    const gamma = energy / mass;
    for (const [qx, qy, qz] of momenta) {
      const q = Math.hypot(qx, qy, qz);
      const bq = bx * qx + by * qy + bz * qz;
      const along = ((gamma - 1) * bq) / beta2 + gamma * q;
      const lx = qx + along * bx;
      const ly = qy + along * by;
      const lz = qz + along * bz;
      const prongPt = Math.hypot(lx, ly);
      const prongEta = Math.asinh(lz / prongPt);
      const prongPhi = Math.atan2(ly, lx);
      eta.push(prongEta);
      phi.push(prongPhi);
      et.push(prongPt * CORE_FRACTION);
      const share = (prongPt * (1 - CORE_FRACTION)) / SHOWER_DEPOSITS;
      for (let k = 0; k < SHOWER_DEPOSITS; k++) {
        const angle = BOOSTED_SHOWER_SCALE * -Math.log(1 - random());
        const direction = 2 * Math.PI * random();
        eta.push(prongEta + angle * Math.cos(direction));
        phi.push(prongPhi + angle * Math.sin(direction));
        et.push(share);
      }
    }
  }
}
