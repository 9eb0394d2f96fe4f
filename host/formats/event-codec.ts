// Event records (message EventRecord in proto/jetlag.proto): encode, and a hand-written
// decoder for the hot path of the workers that fills typed arrays straight from the wire.
//
// API
//   encodeEventRecord(fields): Uint8Array           message bytes (no length prefix)
//   new EventRecordDecoder()                         reusable scratch, grows on demand
//     .decode(bytes): void                           throws Error("at record byte N: ...")
//     .event (.hasEvent: the field was read), .error and the five arrays below with their
//     counts, valid until the next decode
//   decodeEventRecord(bytes): DecodedEvent           one-off decode into owned exact arrays
//
// Data layout of the decoder's scratch (capacity >= count, only [0, count) is meaningful):
//   towerIndex  Int32Array    flat tower indices, wire order       towerIndexCount
//   towerEt     Float64Array  GeV, wire order                      towerEtCount
//   depositEta / depositPhi / depositEt  Float64Array             depositEtaCount ...
// Counts are kept per array: a record whose arrays differ in length is well-formed on the
// wire and is judged invalid one level up (event-towers.ts), where the event number is known.
//
// Wire rules (https://protobuf.dev/programming-guides/encoding/): repeated fields are read
// packed or unpacked, several chunks of one field concatenate, the last value of a singular
// field wins, unknown fields are skipped. A known field with the wrong wire type, a varint
// longer than 10 bytes, a length running past the record, a packed double field whose length
// is not a multiple of 8, wire types 3, 4, 6, 7, or an event number above 2^53 - 1 throw.

import { oneLineText } from './line-text.js';
import { LITTLE_ENDIAN_HOST, ProtoWriter, WireCursor, WIRE_FIXED64, WIRE_LENGTH_DELIMITED, WIRE_VARINT, wireTypeName } from './wire.js';

export interface EventRecordFields {
  event: number;
  towerIndex?: ArrayLike<number>;
  towerEt?: ArrayLike<number>;
  depositEta?: ArrayLike<number>;
  depositPhi?: ArrayLike<number>;
  depositEt?: ArrayLike<number>;
  /** non-empty: the event is invalid (and carries no towers) */
  error?: string;
}

export interface DecodedEvent {
  event: number;
  towerIndex: Int32Array;
  towerEt: Float64Array;
  depositEta: Float64Array;
  depositPhi: Float64Array;
  depositEt: Float64Array;
  /** '' when the record carries no error */
  error: string;
}

const FIELD_EVENT = 1;
const FIELD_TOWER_INDEX = 2;
const FIELD_TOWER_ET = 3;
const FIELD_DEPOSIT_ETA = 4;
const FIELD_DEPOSIT_PHI = 5;
const FIELD_DEPOSIT_ET = 6;
const FIELD_ERROR = 7;

export function encodeEventRecord(fields: EventRecordFields, writer = new ProtoWriter(1024)): Uint8Array {
  if (!Number.isSafeInteger(fields.event) || fields.event < 0) {
    throw new Error(`event number must be an integer in 0..2^53-1, got ${fields.event}`);
  }
  writer.reset();
  writer.uintField(FIELD_EVENT, fields.event);
  if (fields.towerIndex) {
    for (let k = 0; k < fields.towerIndex.length; k++) {
      const index = fields.towerIndex[k];
      if (!Number.isInteger(index) || index < -2147483648 || index > 2147483647) {
        throw new Error(`tower index must be an int32, got ${index}`);
      }
    }
    writer.packedVarints(FIELD_TOWER_INDEX, fields.towerIndex);
  }
  if (fields.towerEt) writer.packedDoubles(FIELD_TOWER_ET, fields.towerEt);
  if (fields.depositEta) writer.packedDoubles(FIELD_DEPOSIT_ETA, fields.depositEta);
  if (fields.depositPhi) writer.packedDoubles(FIELD_DEPOSIT_PHI, fields.depositPhi);
  if (fields.depositEt) writer.packedDoubles(FIELD_DEPOSIT_ET, fields.depositEt);
  if (fields.error) writer.stringField(FIELD_ERROR, fields.error);
  return writer.finish();
}

const DOUBLE_FIELD_NAMES = ['tower_et', 'deposit_eta', 'deposit_phi', 'deposit_et'];

export class EventRecordDecoder {
  event = 0;
  /** false until the event field has been read (so an error text can still name the event) */
  hasEvent = false;
  error = '';
  towerIndex = new Int32Array(256);
  towerIndexCount = 0;
  towerEt = new Float64Array(256);
  towerEtCount = 0;
  depositEta = new Float64Array(0);
  depositEtaCount = 0;
  depositPhi = new Float64Array(0);
  depositPhiCount = 0;
  depositEt = new Float64Array(0);
  depositEtCount = 0;
  private readonly cursor = new WireCursor(new Uint8Array(0));

  decode(bytes: Uint8Array): void {
    const c = this.cursor;
    c.reset(bytes);
    this.event = 0;
    this.hasEvent = false;
    this.error = '';
    this.towerIndexCount = 0;
    this.towerEtCount = 0;
    this.depositEtaCount = 0;
    this.depositPhiCount = 0;
    this.depositEtCount = 0;
    while (c.pos < c.end) {
      const tag = c.readTag();
      const field = tag >>> 3;
      const wireType = tag & 7;
      switch (field) {
        case FIELD_EVENT: {
          c.expect(tag, WIRE_VARINT, 'event');
          const at = c.pos;
          const event = c.readVarint();
          if (event > Number.MAX_SAFE_INTEGER) c.fail(at, `event number ${event} is above 2^53 - 1`);
          this.event = event;
          this.hasEvent = true;
          break;
        }
        case FIELD_TOWER_INDEX:
          if (wireType === WIRE_LENGTH_DELIMITED) this.readPackedIndices();
          else if (wireType === WIRE_VARINT) {
            this.growIndices(1);
            this.towerIndex[this.towerIndexCount++] = c.readInt32();
          } else this.wrongWireType(field, wireType, 'tower_index', 'packed or varint');
          break;
        case FIELD_TOWER_ET:
        case FIELD_DEPOSIT_ETA:
        case FIELD_DEPOSIT_PHI:
        case FIELD_DEPOSIT_ET:
          if (wireType === WIRE_LENGTH_DELIMITED) this.readPackedDoubles(field);
          else if (wireType === WIRE_FIXED64) this.readOneDouble(field);
          else this.wrongWireType(field, wireType, DOUBLE_FIELD_NAMES[field - FIELD_TOWER_ET], 'packed or fixed64');
          break;
        case FIELD_ERROR:
          c.expect(tag, WIRE_LENGTH_DELIMITED, 'error');
          this.error = oneLineText(c.readString()); // echoed in one-line messages
          break;
        default:
          c.skip(wireType);
      }
    }
  }

  private wrongWireType(field: number, wireType: number, name: string, expected: string): never {
    return this.cursor.fail(this.cursor.fieldStart, `field ${field} (${name}) has wire type ${wireType} (${wireTypeName(wireType)}), expected ${expected}`);
  }

  private growIndices(extra: number): void {
    const need = this.towerIndexCount + extra;
    if (need <= this.towerIndex.length) return;
    const grown = new Int32Array(Math.max(need, this.towerIndex.length * 2));
    grown.set(this.towerIndex.subarray(0, this.towerIndexCount));
    this.towerIndex = grown;
  }

  private readPackedIndices(): void {
    const c = this.cursor;
    const length = c.readLength();
    const limit = c.pos + length;
    // every varint takes at least one byte, so length bounds the count
    this.growIndices(length);
    const out = this.towerIndex;
    let n = this.towerIndexCount;
    const bytes = c.bytes;
    let pos = c.pos;
    // inline fast paths for one to three bytes (indices below 2^21: every grid of grid.ts);
    // longer varints (negative int32 and other oddities) go through the cursor
    while (pos < limit) {
      const start = pos;
      let b = bytes[pos++];
      if (b < 0x80) { out[n++] = b; continue; }
      let value = b & 0x7f;
      if (pos < limit) {
        b = bytes[pos++];
        value |= (b & 0x7f) << 7;
        if (b < 0x80) { out[n++] = value; continue; }
        if (pos < limit) {
          b = bytes[pos++];
          value |= b << 14;
          if (b < 0x80) { out[n++] = value; continue; }
        }
      }
      c.pos = start;
      out[n++] = c.readInt32(limit);
      pos = c.pos;
    }
    c.pos = limit;
    this.towerIndexCount = n;
  }

  private doubleTarget(field: number, extra: number): Float64Array {
    let array: Float64Array;
    let count: number;
    switch (field) {
      case FIELD_TOWER_ET: array = this.towerEt; count = this.towerEtCount; break;
      case FIELD_DEPOSIT_ETA: array = this.depositEta; count = this.depositEtaCount; break;
      case FIELD_DEPOSIT_PHI: array = this.depositPhi; count = this.depositPhiCount; break;
      default: array = this.depositEt; count = this.depositEtCount; break;
    }
    if (count + extra <= array.length) return array;
    const grown = new Float64Array(Math.max(count + extra, array.length * 2, 256));
    grown.set(array.subarray(0, count));
    switch (field) {
      case FIELD_TOWER_ET: this.towerEt = grown; break;
      case FIELD_DEPOSIT_ETA: this.depositEta = grown; break;
      case FIELD_DEPOSIT_PHI: this.depositPhi = grown; break;
      default: this.depositEt = grown; break;
    }
    return grown;
  }

  private countOf(field: number): number {
    switch (field) {
      case FIELD_TOWER_ET: return this.towerEtCount;
      case FIELD_DEPOSIT_ETA: return this.depositEtaCount;
      case FIELD_DEPOSIT_PHI: return this.depositPhiCount;
      default: return this.depositEtCount;
    }
  }

  private addCount(field: number, extra: number): void {
    switch (field) {
      case FIELD_TOWER_ET: this.towerEtCount += extra; break;
      case FIELD_DEPOSIT_ETA: this.depositEtaCount += extra; break;
      case FIELD_DEPOSIT_PHI: this.depositPhiCount += extra; break;
      default: this.depositEtCount += extra; break;
    }
  }

  private readPackedDoubles(field: number): void {
    const c = this.cursor;
    const at = c.pos;
    const length = c.readLength();
    if (length % 8 !== 0) {
      c.fail(at, `packed field ${field} (${DOUBLE_FIELD_NAMES[field - FIELD_TOWER_ET]}) has length ${length}, not a multiple of 8`);
    }
    const n = length / 8;
    const out = this.doubleTarget(field, n);
    const count = this.countOf(field);
    if (LITTLE_ENDIAN_HOST) {
      // block copy: the wire's little-endian doubles are this machine's doubles
      new Uint8Array(out.buffer, out.byteOffset + count * 8, length).set(c.bytes.subarray(c.pos, c.pos + length));
    } else {
      for (let k = 0; k < n; k++) out[count + k] = c.view.getFloat64(c.pos + 8 * k, true);
    }
    c.pos += length;
    this.addCount(field, n);
  }

  private readOneDouble(field: number): void {
    const out = this.doubleTarget(field, 1);
    out[this.countOf(field)] = this.cursor.readDouble();
    this.addCount(field, 1);
  }

  /** Owned copies of the decoded arrays. */
  toDecodedEvent(): DecodedEvent {
    return {
      event: this.event,
      towerIndex: this.towerIndex.slice(0, this.towerIndexCount),
      towerEt: this.towerEt.slice(0, this.towerEtCount),
      depositEta: this.depositEta.slice(0, this.depositEtaCount),
      depositPhi: this.depositPhi.slice(0, this.depositPhiCount),
      depositEt: this.depositEt.slice(0, this.depositEtCount),
      error: this.error,
    };
  }
}

let sharedDecoder: EventRecordDecoder | null = null;

/** Decodes one event record into owned arrays (allocates; the workers use EventRecordDecoder). */
export function decodeEventRecord(bytes: Uint8Array): DecodedEvent {
  sharedDecoder ??= new EventRecordDecoder();
  sharedDecoder.decode(bytes);
  return sharedDecoder.toDecodedEvent();
}
