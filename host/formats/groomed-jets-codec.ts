// The groomed rows of a jets record (message GroomedJets in proto/jetlag.proto, fields 21 trim
// and 22 soft_drop of JetsRecord): types.ts TrimmedJets and SoftDropJets, row k for jet k.
// A record carries a groomer's message whenever the groomer ran, also for an event without
// jets (then empty), so that a reader tells "ran, no jets" from "did not run".

import type { GroomedFourVectors, SoftDropJets, TrimmedJets } from '../types.js';
import { allocateSoftDropJets, allocateTrimmedJets } from '../clustering/grooming/rows.js';
import { JET_DOUBLE_FIELDS } from '../clustering/jet-set.js';
import { ProtoWriter, WireCursor, WIRE_FIXED64, WIRE_LENGTH_DELIMITED, WIRE_VARINT, wireTypeName } from './wire.js';

/** proto names of GroomedJets fields 1..8, in JET_DOUBLE_FIELDS' order */
const PROTO_DOUBLE_NAMES = ['px', 'py', 'pz', 'e', 'pt', 'y', 'phi', 'mass'] as const;
const FIELD_TOWER_COUNT = 9;
const FIELD_SUBJETS = 10;
const FIELD_ZG = 11;
const FIELD_RG = 12;

const groomedWriter = new ProtoWriter(1024);

function writeFourVectors(rows: GroomedFourVectors, count: number): void {
  for (let f = 0; f < JET_DOUBLE_FIELDS.length; f++) groomedWriter.packedDoubles(1 + f, rows[JET_DOUBLE_FIELDS[f]], count);
  groomedWriter.packedVarints(FIELD_TOWER_COUNT, rows.towerCount, count);
}

export function encodeTrimmedJets(rows: TrimmedJets, count: number): Uint8Array {
  groomedWriter.reset();
  writeFourVectors(rows, count);
  groomedWriter.packedVarints(FIELD_SUBJETS, rows.subjets, count);
  return groomedWriter.finish();
}

export function encodeSoftDropJets(rows: SoftDropJets, count: number): Uint8Array {
  groomedWriter.reset();
  writeFourVectors(rows, count);
  groomedWriter.packedDoubles(FIELD_ZG, rows.zg, count);
  groomedWriter.packedDoubles(FIELD_RG, rows.deltaRg, count);
  return groomedWriter.finish();
}

/** The message's arrays as read, before their lengths are checked against the jets. */
export interface RawGroomedJets {
  doubles: number[][];
  towerCount: number[];
  subjets: number[];
  zg: number[];
  rg: number[];
}

/** Reads a GroomedJets message up to `end`; throws Error("at record byte N: ...") on a broken one. */
export function readGroomedJets(c: WireCursor, end: number, message: string): RawGroomedJets {
  const raw: RawGroomedJets = { doubles: PROTO_DOUBLE_NAMES.map(() => []), towerCount: [], subjets: [], zg: [], rg: [] };
  const doublesInto = (out: number[], name: string, tag: number) => {
    const wireType = tag & 7;
    if (wireType === WIRE_FIXED64) out.push(c.readDouble());
    else if (wireType === WIRE_LENGTH_DELIMITED) {
      const at = c.pos;
      const length = c.readLength();
      if (length % 8 !== 0) c.fail(at, `packed field ${message}.${name} has length ${length}, not a multiple of 8`);
      for (let k = 0; k < length; k += 8) out.push(c.view.getFloat64(c.pos + k, true));
      c.pos += length;
    } else {
      c.fail(c.fieldStart, `field ${message}.${name} has wire type ${wireType} (${wireTypeName(wireType)}), expected packed or fixed64`);
    }
  };
  const varintsInto = (out: number[], name: string, tag: number) => {
    const wireType = tag & 7;
    const at = c.fieldStart;
    if (wireType === WIRE_VARINT) out.push(c.readVarint());
    else if (wireType === WIRE_LENGTH_DELIMITED) {
      const length = c.readLength();
      const limit = c.pos + length;
      while (c.pos < limit) out.push(c.readVarint(limit));
    } else {
      c.fail(at, `field ${message}.${name} has wire type ${wireType} (${wireTypeName(wireType)}), expected packed or varint`);
    }
    for (const n of out) if (n > 0x7fffffff) c.fail(at, `${message}.${name} value ${n} is too large`);
  };
  // fields of a sub-message must end inside it
  const outerEnd = c.end;
  c.end = end;
  while (c.pos < end) {
    const tag = c.readTag();
    const field = tag >>> 3;
    if (field >= 1 && field <= 8) doublesInto(raw.doubles[field - 1], PROTO_DOUBLE_NAMES[field - 1], tag);
    else if (field === FIELD_TOWER_COUNT) varintsInto(raw.towerCount, 'tower_count', tag);
    else if (field === FIELD_SUBJETS) varintsInto(raw.subjets, 'subjets', tag);
    else if (field === FIELD_ZG) doublesInto(raw.zg, 'zg', tag);
    else if (field === FIELD_RG) doublesInto(raw.rg, 'rg', tag);
    else c.skip(tag & 7);
  }
  c.end = outerEnd;
  return raw;
}

/** '' when every array the groomer fills has one value per jet, else what is wrong */
function lengthProblem(raw: RawGroomedJets, jetCount: number, message: string, extra: [string, number[]][]): string {
  const arrays: [string, number[]][] = [...PROTO_DOUBLE_NAMES.map((name, f) => [name, raw.doubles[f]] as [string, number[]]), ['tower_count', raw.towerCount], ...extra];
  for (const [name, values] of arrays) {
    if (values.length !== jetCount) return `${message}.${name} has ${values.length} values but px has ${jetCount}`;
  }
  return '';
}

function fillFourVectors(rows: GroomedFourVectors, raw: RawGroomedJets): void {
  for (let f = 0; f < JET_DOUBLE_FIELDS.length; f++) rows[JET_DOUBLE_FIELDS[f]].set(raw.doubles[f]);
  rows.towerCount.set(raw.towerCount);
}

export function trimmedJetsFrom(raw: RawGroomedJets, jetCount: number): { rows: TrimmedJets; problem: string } {
  const rows = allocateTrimmedJets(jetCount);
  const problem = lengthProblem(raw, jetCount, 'trim', [['subjets', raw.subjets]]);
  if (problem === '') { fillFourVectors(rows, raw); rows.subjets.set(raw.subjets); }
  return { rows, problem };
}

export function softDropJetsFrom(raw: RawGroomedJets, jetCount: number): { rows: SoftDropJets; problem: string } {
  const rows = allocateSoftDropJets(jetCount);
  const problem = lengthProblem(raw, jetCount, 'soft_drop', [['zg', raw.zg], ['rg', raw.rg]]);
  if (problem === '') { fillFourVectors(rows, raw); rows.zg.set(raw.zg); rows.deltaRg.set(raw.rg); }
  return { rows, problem };
}
