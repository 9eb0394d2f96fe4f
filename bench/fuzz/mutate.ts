// Seeded mutations of a valid input: what a cut transfer, a bad disk, a careless script or a
// hostile sender does to a file. Each mutation is a pure function of (input, random draws), so
// a seed and a case number give the same bytes again.
//
// API
//   mutate(input, donor, random): { bytes, how }   one to three mutations in a row; `donor`
//                                                  is another valid input, for splices; `how`
//                                                  names them ("truncate@120+bitflip@7")

export type Random = () => number;

function below(random: Random, n: number): number {
  return Math.floor(random() * n);
}

/** where mutations land: anywhere, but more often near the start, where headers are */
function position(random: Random, length: number): number {
  if (length === 0) return 0;
  return random() < 0.3 ? below(random, Math.min(length, 64)) : below(random, length);
}

type Mutation = (bytes: Uint8Array, donor: Uint8Array, random: Random) => { bytes: Uint8Array; how: string };

const MUTATIONS: Mutation[] = [
  // cut short
  (bytes, _donor, random) => {
    const at = below(random, bytes.length + 1);
    return { bytes: bytes.slice(0, at), how: `truncate@${at}` };
  },
  // flip 1..8 bits
  (bytes, _donor, random) => {
    const out = bytes.slice();
    const flips = 1 + below(random, 8);
    for (let k = 0; k < flips && out.length > 0; k++) out[position(random, out.length)] ^= 1 << below(random, 8);
    return { bytes: out, how: `bitflip×${flips}` };
  },
  // a byte set to a telling value
  (bytes, _donor, random) => {
    const out = bytes.slice();
    const at = position(random, out.length);
    const values = [0x00, 0xff, 0x7f, 0x80, 0x0a, 0x2c, 0x30 + below(random, 10), below(random, 256)];
    if (out.length > 0) out[at] = values[below(random, values.length)];
    return { bytes: out, how: `byte@${at}` };
  },
  // a run deleted
  (bytes, _donor, random) => {
    const at = position(random, bytes.length);
    const end = Math.min(bytes.length, at + 1 + below(random, 32));
    const out = new Uint8Array(bytes.length - (end - at));
    out.set(bytes.subarray(0, at));
    out.set(bytes.subarray(end), at);
    return { bytes: out, how: `delete@${at}+${end - at}` };
  },
  // random bytes inserted
  (bytes, _donor, random) => {
    const at = position(random, bytes.length);
    const insert = new Uint8Array(1 + below(random, 16)).map(() => below(random, 256));
    const out = new Uint8Array(bytes.length + insert.length);
    out.set(bytes.subarray(0, at));
    out.set(insert, at);
    out.set(bytes.subarray(at), at + insert.length);
    return { bytes: out, how: `insert@${at}+${insert.length}` };
  },
  // a piece of another valid input spliced in (records of one file inside another)
  (bytes, donor, random) => {
    const at = position(random, bytes.length);
    const from = below(random, donor.length + 1);
    const piece = donor.subarray(from, from + 1 + below(random, 200));
    const out = new Uint8Array(at + piece.length + (bytes.length - at));
    out.set(bytes.subarray(0, at));
    out.set(piece, at);
    out.set(bytes.subarray(at), at + piece.length);
    return { bytes: out, how: `splice@${at}+${piece.length}` };
  },
  // a run repeated (a record twice, a line twice)
  (bytes, _donor, random) => {
    const at = position(random, bytes.length);
    const piece = bytes.slice(at, at + 1 + below(random, 100));
    const out = new Uint8Array(bytes.length + piece.length);
    out.set(bytes.subarray(0, at + piece.length));
    out.set(piece, at + piece.length);
    out.set(bytes.subarray(at + piece.length), at + 2 * piece.length);
    return { bytes: out, how: `repeat@${at}+${piece.length}` };
  },
  // a length or number grown: a byte replaced by a long varint or by many digits
  (bytes, _donor, random) => {
    const at = position(random, bytes.length);
    const text = random() < 0.5;
    const insert = text
      ? Uint8Array.from(String(below(random, 2 ** 31) * (random() < 0.5 ? 1 : 4096)), (c) => c.charCodeAt(0))
      : Uint8Array.of(0xff, 0xff, 0xff, 0xff, below(random, 0x80));
    const out = new Uint8Array(bytes.length - Math.min(1, bytes.length - at) + insert.length);
    out.set(bytes.subarray(0, at));
    out.set(insert, at);
    out.set(bytes.subarray(at + 1), at + insert.length);
    return { bytes: out, how: `${text ? 'digits' : 'varint'}@${at}` };
  },
];

export function mutate(input: Uint8Array, donor: Uint8Array, random: Random): { bytes: Uint8Array; how: string } {
  // a plain copy: Buffer's slice() is a view, and a flip through it would change the valid input
  let bytes: Uint8Array = new Uint8Array(input);
  const hows: string[] = [];
  const steps = 1 + below(random, 3);
  for (let k = 0; k < steps; k++) {
    const step = MUTATIONS[below(random, MUTATIONS.length)](bytes, donor, random);
    bytes = step.bytes;
    hows.push(step.how);
  }
  return { bytes, how: hows.join('+') };
}
