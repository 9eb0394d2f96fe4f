// Jets files (proto/jetlag.proto): the header of a jets file and one JetsRecord per event,
// from and to JetSet (types.ts).
//
// API
//   encodeJetsRecord({ event, jets, clusterTimeNs?, error?, eventTowers? }): Uint8Array   message bytes
//   encodeDelimitedJetsRecord(event, jets | null, clusterTimeNs, error, eventTowers?): Uint8Array
//       the same in the delimited form (length varint first), ready to append to a file
//   encodeJetsFileHeader(grid, settings, { producer?, label? }): Uint8Array
//       the header record of a jets file, delimited, ready to write first
//   decodeJetsRecord(bytes): DecodedJets
//       throws Error("at record byte N: ...") on broken wire format; a record that is
//       well-formed but inconsistent (per-jet arrays of different lengths, constituent
//       indices not adding up) comes back with `problem` set, since its event is known
//   (JetsFileWriter, in output/jets-writer.ts, writes whole jets files)
//
// Constituents: written when jets.towers holds them (length = sum of towerCount); a record
// without them decodes with hasTowers false and an empty towers array.
//
// Pileup values (spec part two, fields 14-20): written when jets.pileup is set. A record read
// back gets jets.pileup when it holds any of them, or always with decodeJetsRecord(bytes,
// { pileup: true }) (a jets file whose header names pileup steps): proto3 leaves zeros
// unwritten, so an event with rho 0 and no jets holds none. Per-jet arrays left out read as
// ghosts 0, area 0 and ptRaw = pt (the values without areas and without subtraction).
//
// Groomed rows (spec section 12, fields 21 trim and 22 soft_drop): written when jets.trim
// (jets.softDrop) is set; read back when the record holds them, or always with { trim: true }
// ({ softDrop: true }); a groomer's array with a length other than the jet count is a problem.
//
// The event's tower count (field 23 event_towers, towers above the threshold): written, 0
// included, when eventTowers is given; a record without it (an older file, an error record, an
// engine program's answer) reads back as eventTowers null, never as an invented 0.

import { encodeFileHeader, type FileHeader, type JetsFileSettings } from './file-header.js';
import type { Grid, JetSet } from '../types.js';
import { delimit, ProtoWriter, WireCursor, WIRE_FIXED64, WIRE_LENGTH_DELIMITED, WIRE_VARINT, wireTypeName } from './wire.js';
import { allocateJetSet } from '../clustering/jet-set.js';
import { oneLineText } from './line-text.js';
import { encodeSoftDropJets, encodeTrimmedJets, readGroomedJets, softDropJetsFrom, trimmedJetsFrom, type RawGroomedJets } from './groomed-jets-codec.js';

export interface JetsRecordFields {
  event: number;
  /** null or undefined for an invalid event */
  jets?: JetSet | null;
  clusterTimeNs?: number;
  error?: string;
  /** towers of the event that entered clustering; absent: not recorded */
  eventTowers?: number | null;
}

export interface DecodedJets {
  event: number;
  jets: JetSet;
  hasTowers: boolean;
  clusterTimeNs: number;
  /** towers of the event that entered clustering, null when the record does not say */
  eventTowers: number | null;
  /** '' for a valid event */
  error: string;
  /** '' when the record is consistent, else what is wrong with it */
  problem: string;
}

export function emptyJetSet(): JetSet {
  return allocateJetSet(0);
}

const DOUBLE_FIELDS = ['px', 'py', 'pz', 'e', 'pt', 'y', 'phi', 'mass'] as const; // fields 2..9
const FIELD_COUNT = 10;
const FIELD_TOWERS = 11;
const FIELD_TIME = 12;
const FIELD_ERROR = 13;
const FIELD_RHO = 14;
const FIELD_ET_CUT = 15;
const FIELD_KILLED = 16;
const FIELD_SUBTRACTED_AWAY = 17;
const FIELD_GHOSTS = 18;
const FIELD_AREA = 19;
const FIELD_PT_RAW = 20;
const FIELD_TRIM = 21;
const FIELD_SOFT_DROP = 22;
const FIELD_EVENT_TOWERS = 23;

const sharedWriter = new ProtoWriter(4096);

export function encodeJetsRecord(fields: JetsRecordFields, writer = sharedWriter): Uint8Array {
  if (!Number.isSafeInteger(fields.event) || fields.event < 0) throw new Error(`event number must be an integer in 0..2^53-1, got ${fields.event}`);
  writer.reset();
  writer.uintField(1, fields.event);
  const jets = fields.jets;
  if (jets && jets.count > 0) {
    const n = jets.count;
    const arrays = [jets.px, jets.py, jets.pz, jets.energy, jets.pt, jets.rapidity, jets.phi, jets.mass];
    for (let f = 0; f < arrays.length; f++) writer.packedDoubles(2 + f, arrays[f], n);
    writer.packedVarints(FIELD_COUNT, jets.towerCount, n);
    let total = 0;
    for (let k = 0; k < n; k++) total += jets.towerCount[k];
    if (jets.towers.length > 0) {
      if (jets.towers.length < total) throw new Error(`jets of event ${fields.event}: ${jets.towers.length} constituent indices for ${total} constituents`);
      // constituents of jet k sit at towerStart[k]; the file holds them jet after jet
      const ordered = new Int32Array(total);
      let at = 0;
      for (let k = 0; k < n; k++) {
        ordered.set(jets.towers.subarray(jets.towerStart[k], jets.towerStart[k] + jets.towerCount[k]), at);
        at += jets.towerCount[k];
      }
      writer.packedVarints(FIELD_TOWERS, ordered);
    }
  }
  const pileup = jets?.pileup;
  if (pileup) {
    const n = jets!.count;
    writer.doubleField(FIELD_RHO, pileup.rho);
    writer.doubleField(FIELD_ET_CUT, pileup.etCut);
    writer.uintField(FIELD_KILLED, pileup.killed);
    writer.uintField(FIELD_SUBTRACTED_AWAY, pileup.subtractedAway);
    writer.packedVarints(FIELD_GHOSTS, pileup.ghosts, n);
    writer.packedDoubles(FIELD_AREA, pileup.area, n);
    writer.packedDoubles(FIELD_PT_RAW, pileup.ptRaw, n);
  }
  // a groomer's message is written whenever it ran, also for no jets (see groomed-jets-codec.ts)
  if (jets?.trim) writer.messageField(FIELD_TRIM, encodeTrimmedJets(jets.trim, jets.count));
  if (jets?.softDrop) writer.messageField(FIELD_SOFT_DROP, encodeSoftDropJets(jets.softDrop, jets.count));
  const time = fields.clusterTimeNs ?? 0;
  if (!(time >= 0) || !Number.isFinite(time)) throw new Error(`cluster time must be >= 0 ns, got ${time}`);
  writer.uintField(FIELD_TIME, Math.round(time));
  if (fields.error) writer.stringField(FIELD_ERROR, fields.error);
  const eventTowers = fields.eventTowers;
  if (eventTowers !== undefined && eventTowers !== null) {
    if (!Number.isInteger(eventTowers) || eventTowers < 0 || eventTowers > 0xffffffff) throw new Error(`event tower count must be an integer in 0..2^32-1, got ${eventTowers}`);
    // written even when 0: the field has explicit presence (proto3 optional)
    writer.tag(FIELD_EVENT_TOWERS, WIRE_VARINT).varint(eventTowers);
  }
  return writer.finish();
}

export function encodeDelimitedJetsRecord(event: number, jets: JetSet | null, clusterTimeNs: number, error: string, eventTowers: number | null = null): Uint8Array {
  return delimit(encodeJetsRecord({ event, jets, clusterTimeNs, error, eventTowers }));
}

export interface JetsHeaderText {
  /** default "jetlag" */
  producer?: string;
  label?: string;
}

export function jetsFileHeader(grid: Grid, settings: JetsFileSettings, text: JetsHeaderText = {}): FileHeader {
  return { kind: 'jets', grid, settings, producer: text.producer ?? 'jetlag', label: text.label ?? '', formatVersion: 1 };
}

export function encodeJetsFileHeader(grid: Grid, settings: JetsFileSettings, text: JetsHeaderText = {}): Uint8Array {
  return delimit(encodeFileHeader(jetsFileHeader(grid, settings, text)));
}

export interface DecodeJetsOptions {
  /** give every valid event jets.pileup, even one whose record holds no pileup value */
  pileup?: boolean;
  /** give every valid event jets.trim (jets.softDrop), even one whose record holds none */
  trim?: boolean;
  softDrop?: boolean;
}

export function decodeJetsRecord(bytes: Uint8Array, options: DecodeJetsOptions = {}): DecodedJets {
  const c = new WireCursor(bytes);
  let event = 0;
  let clusterTimeNs = 0;
  let eventTowers: number | null = null;
  let error = '';
  const doubles: number[][] = DOUBLE_FIELDS.map(() => []);
  const counts: number[] = [];
  const towers: number[] = [];
  const eventPileup = { rho: 0, etCut: 0, killed: 0, subtractedAway: 0, seen: false };
  const ghosts: number[] = [];
  const area: number[] = [];
  const ptRaw: number[] = [];
  let trimRaw: RawGroomedJets | null = null;
  let softDropRaw: RawGroomedJets | null = null;
  const readDoubles = (out: number[], name: string, field: number, wireType: number) => {
    if (wireType === WIRE_FIXED64) out.push(c.readDouble());
    else if (wireType === WIRE_LENGTH_DELIMITED) {
      const at = c.pos;
      const length = c.readLength();
      if (length % 8 !== 0) c.fail(at, `packed field ${field} (${name}) has length ${length}, not a multiple of 8`);
      for (let k = 0; k < length; k += 8) out.push(c.view.getFloat64(c.pos + k, true));
      c.pos += length;
    } else {
      c.fail(c.fieldStart, `field ${field} (${name}) has wire type ${wireType} (${wireTypeName(wireType)}), expected packed or fixed64`);
    }
  };
  const readVarints = (out: number[], int32: boolean, name: string, tag: number) => {
    const wireType = tag & 7;
    if (wireType === WIRE_VARINT) {
      out.push(int32 ? c.readInt32() : c.readVarint());
    } else if (wireType === WIRE_LENGTH_DELIMITED) {
      const length = c.readLength();
      const limit = c.pos + length;
      while (c.pos < limit) out.push(int32 ? c.readInt32(limit) : c.readVarint(limit));
    } else {
      c.fail(c.fieldStart, `field ${tag >>> 3} (${name}) has wire type ${wireType} (${wireTypeName(wireType)}), expected packed or varint`);
    }
  };
  while (c.pos < c.end) {
    const tag = c.readTag();
    const field = tag >>> 3;
    const wireType = tag & 7;
    if (field >= 2 && field <= 9) {
      readDoubles(doubles[field - 2], DOUBLE_FIELDS[field - 2], field, wireType);
      continue;
    }
    switch (field) {
      case 1: {
        c.expect(tag, WIRE_VARINT, 'event');
        const at = c.pos;
        event = c.readVarint();
        if (event > Number.MAX_SAFE_INTEGER) c.fail(at, `event number ${event} is above 2^53 - 1`);
        break;
      }
      case FIELD_COUNT: {
        const at = c.fieldStart;
        readVarints(counts, false, 'constituent_count', tag);
        for (const n of counts) if (n > 0x7fffffff) c.fail(at, `constituent count ${n} is too large`);
        break;
      }
      case FIELD_TOWERS: readVarints(towers, true, 'constituent_towers', tag); break;
      case FIELD_TIME: c.expect(tag, WIRE_VARINT, 'cluster_time_ns'); clusterTimeNs = c.readVarint(); break;
      case FIELD_EVENT_TOWERS: {
        c.expect(tag, WIRE_VARINT, 'event_towers');
        const at = c.pos;
        eventTowers = c.readVarint();
        if (eventTowers > 0xffffffff) c.fail(at, `event tower count ${eventTowers} is above 2^32 - 1`);
        break;
      }
      case FIELD_ERROR: c.expect(tag, WIRE_LENGTH_DELIMITED, 'error'); error = oneLineText(c.readString()); break;
      case FIELD_RHO: c.expect(tag, WIRE_FIXED64, 'rho'); eventPileup.rho = c.readDouble(); eventPileup.seen = true; break;
      case FIELD_ET_CUT: c.expect(tag, WIRE_FIXED64, 'et_cut'); eventPileup.etCut = c.readDouble(); eventPileup.seen = true; break;
      case FIELD_KILLED: c.expect(tag, WIRE_VARINT, 'killed'); eventPileup.killed = c.readVarint(); eventPileup.seen = true; break;
      case FIELD_SUBTRACTED_AWAY: c.expect(tag, WIRE_VARINT, 'subtracted_away'); eventPileup.subtractedAway = c.readVarint(); eventPileup.seen = true; break;
      case FIELD_GHOSTS: readVarints(ghosts, false, 'ghosts', tag); break;
      case FIELD_AREA: readDoubles(area, 'area', field, wireType); break;
      case FIELD_PT_RAW: readDoubles(ptRaw, 'pt_raw', field, wireType); break;
      case FIELD_TRIM: {
        c.expect(tag, WIRE_LENGTH_DELIMITED, 'trim');
        const length = c.readLength();
        trimRaw = readGroomedJets(c, c.pos + length, 'trim');
        break;
      }
      case FIELD_SOFT_DROP: {
        c.expect(tag, WIRE_LENGTH_DELIMITED, 'soft_drop');
        const length = c.readLength();
        softDropRaw = readGroomedJets(c, c.pos + length, 'soft_drop');
        break;
      }
      default: c.skip(wireType);
    }
  }

  const jetCount = doubles[0].length;
  let problem = '';
  for (let f = 1; f < DOUBLE_FIELDS.length && problem === ''; f++) {
    if (doubles[f].length !== jetCount) problem = `${DOUBLE_FIELDS[f]} has ${doubles[f].length} values but px has ${jetCount}`;
  }
  if (problem === '' && counts.length !== jetCount) problem = `constituent_count has ${counts.length} values but px has ${jetCount}`;
  const towerStart = new Int32Array(counts.length);
  let total = 0;
  for (let k = 0; k < counts.length; k++) { towerStart[k] = total; total += counts[k]; }
  if (problem === '' && towers.length > 0 && towers.length !== total) {
    problem = `constituent_towers has ${towers.length} values but constituent_count adds up to ${total}`;
  }
  if (problem === '' && error !== '' && jetCount > 0) problem = `the record has an error text and ${jetCount} jets`;
  for (const [name, values] of [['ghosts', ghosts], ['area', area], ['pt_raw', ptRaw]] as const) {
    if (problem === '' && values.length > 0 && values.length !== jetCount) problem = `${name} has ${values.length} values but px has ${jetCount}`;
  }
  const jets: JetSet = {
    count: jetCount,
    px: Float64Array.from(doubles[0]),
    py: Float64Array.from(doubles[1]),
    pz: Float64Array.from(doubles[2]),
    energy: Float64Array.from(doubles[3]),
    pt: Float64Array.from(doubles[4]),
    rapidity: Float64Array.from(doubles[5]),
    phi: Float64Array.from(doubles[6]),
    mass: Float64Array.from(doubles[7]),
    towerCount: Int32Array.from(counts),
    towerStart,
    towers: Int32Array.from(towers),
  };
  const anyPileup = eventPileup.seen || ghosts.length > 0 || area.length > 0 || ptRaw.length > 0;
  if (problem === '' && error === '' && (anyPileup || options.pileup)) {
    jets.pileup = {
      rho: eventPileup.rho,
      etCut: eventPileup.etCut,
      killed: eventPileup.killed,
      subtractedAway: eventPileup.subtractedAway,
      ghosts: ghosts.length > 0 ? Int32Array.from(ghosts) : new Int32Array(jetCount),
      area: area.length > 0 ? Float64Array.from(area) : new Float64Array(jetCount),
      ptRaw: ptRaw.length > 0 ? Float64Array.from(ptRaw) : jets.pt.slice(),
    };
  }
  const noRows: RawGroomedJets = { doubles: [[], [], [], [], [], [], [], []], towerCount: [], subjets: [], zg: [], rg: [] };
  if (problem === '' && error === '' && (trimRaw !== null || options.trim)) {
    const trimmed = trimmedJetsFrom(trimRaw ?? noRows, jetCount);
    if (trimmed.problem === '') jets.trim = trimmed.rows;
    else problem = trimmed.problem;
  }
  if (problem === '' && error === '' && (softDropRaw !== null || options.softDrop)) {
    const groomed = softDropJetsFrom(softDropRaw ?? noRows, jetCount);
    if (groomed.problem === '') jets.softDrop = groomed.rows;
    else problem = groomed.problem;
  }
  return { event, jets, hasTowers: towers.length > 0 || total === 0, clusterTimeNs, eventTowers, error, problem };
}
