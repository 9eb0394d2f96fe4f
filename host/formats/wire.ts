// Over 300 lines on purpose: one format, its reader and its writer side by side so each encoding can be checked against its decoding.
// Protobuf wire format, the small part jetlag needs (https://protobuf.dev/programming-guides/encoding/):
// varints, 64-bit doubles, length-delimited fields (strings, sub-messages, packed arrays).
//
//   WireCursor  reads one message from a byte range; every failure throws a plain Error whose
//               text starts "at record byte N:" (N counted from the start of the message bytes
//               given to the cursor); callers add file, event and record offset.
//   ProtoWriter appends fields to a growable buffer; finish() returns the message bytes.
//
// Both assume nothing about alignment; doubles go through a DataView (little-endian, as the
// wire format says).

export const WIRE_VARINT = 0;
export const WIRE_FIXED64 = 1;
export const WIRE_LENGTH_DELIMITED = 2;
export const WIRE_FIXED32 = 5;

const WIRE_TYPE_NAMES = ['varint', 'fixed64', 'length-delimited', 'start-group', 'end-group', 'fixed32', 'invalid 6', 'invalid 7'];

export function wireTypeName(wireType: number): string {
  return WIRE_TYPE_NAMES[wireType & 7];
}

/** true when this machine stores doubles little-endian, so packed doubles can be block-copied */
export const LITTLE_ENDIAN_HOST = new Uint8Array(new Float64Array([1]).buffer)[7] === 0x3f;

export class WireCursor {
  bytes: Uint8Array;
  pos: number;
  end: number;
  /** position where the field being read started (its tag), for error texts */
  fieldStart: number;
  private dataView: DataView | null = null;

  constructor(bytes: Uint8Array) {
    this.bytes = bytes;
    this.pos = 0;
    this.end = bytes.length;
    this.fieldStart = 0;
  }

  /** made on first use: packed doubles are block-copied and need none on little-endian hosts */
  get view(): DataView {
    this.dataView ??= new DataView(this.bytes.buffer, this.bytes.byteOffset, this.bytes.byteLength);
    return this.dataView;
  }

  reset(bytes: Uint8Array): void {
    if (bytes !== this.bytes) {
      this.bytes = bytes;
      this.dataView = null;
    }
    this.pos = 0;
    this.end = bytes.length;
    this.fieldStart = 0;
  }

  fail(at: number, detail: string): never {
    throw new Error(`at record byte ${at}: ${detail}`);
  }

  /** A varint of at most 10 bytes, as a number (exact up to 2^53; larger values lose low bits). */
  readVarint(limit = this.end): number {
    const bytes = this.bytes;
    const start = this.pos;
    let pos = start;
    // first four bytes with 32-bit integer arithmetic: the common case
    let value = 0;
    let shift = 0;
    for (; shift < 28; shift += 7) {
      if (pos >= limit) this.fail(start, 'truncated varint');
      const b = bytes[pos++];
      value |= (b & 0x7f) << shift;
      if (b < 0x80) { this.pos = pos; return value; }
    }
    // bytes five to ten: float arithmetic, 2^28 and up
    let high = value;
    let scale = 268435456; // 2^28
    for (let k = 4; k < 10; k++) {
      if (pos >= limit) this.fail(start, 'truncated varint');
      const b = bytes[pos++];
      high += (b & 0x7f) * scale;
      if (b < 0x80) { this.pos = pos; return high; }
      scale *= 128;
    }
    this.fail(start, 'varint longer than 10 bytes');
  }

  /** A varint read as int32 (two's complement low 32 bits, as protobuf's int32 does). */
  readInt32(limit = this.end): number {
    const bytes = this.bytes;
    const start = this.pos;
    let pos = start;
    let value = 0;
    for (let shift = 0; shift < 35; shift += 7) {
      if (pos >= limit) this.fail(start, 'truncated varint');
      const b = bytes[pos++];
      // shift 28 keeps only the low 4 bits of the fifth byte: the rest lies above bit 31
      value |= (b & 0x7f) << shift;
      if (b < 0x80) { this.pos = pos; return value | 0; }
    }
    // bytes six to ten only carry sign extension; they must still end properly
    for (let k = 5; k < 10; k++) {
      if (pos >= limit) this.fail(start, 'truncated varint');
      if (bytes[pos++] < 0x80) { this.pos = pos; return value | 0; }
    }
    this.fail(start, 'varint longer than 10 bytes');
  }

  /** Tag of the next field; sets fieldStart. Field number 0 or wire types 3, 4, 6, 7 are errors. */
  readTag(): number {
    this.fieldStart = this.pos;
    const tag = this.readVarint();
    const wireType = tag & 7;
    if (tag < 8 || tag > 0xffffffff) this.fail(this.fieldStart, `bad field tag ${tag}`);
    if (wireType !== 0 && wireType !== 1 && wireType !== 2 && wireType !== 5) {
      this.fail(this.fieldStart, `field ${Math.floor(tag / 8)} has unsupported wire type ${wireType} (${wireTypeName(wireType)})`);
    }
    return tag;
  }

  /** Length of a length-delimited field; checks it fits inside the message. */
  readLength(): number {
    const at = this.pos;
    const length = this.readVarint();
    if (length > this.end - this.pos) {
      this.fail(at, `field length ${length} runs past the end of the record (${this.end - this.pos} bytes left)`);
    }
    return length;
  }

  readDouble(): number {
    if (this.end - this.pos < 8) this.fail(this.pos, 'truncated double');
    const value = this.view.getFloat64(this.pos, true);
    this.pos += 8;
    return value;
  }

  readString(): string {
    const length = this.readLength();
    const text = utf8.decode(this.bytes.subarray(this.pos, this.pos + length));
    this.pos += length;
    return text;
  }

  /** Skips an unknown field's value. */
  skip(wireType: number): void {
    switch (wireType) {
      case WIRE_VARINT: this.readVarint(); return;
      case WIRE_FIXED64:
        if (this.end - this.pos < 8) this.fail(this.pos, 'truncated fixed64 field');
        this.pos += 8;
        return;
      case WIRE_LENGTH_DELIMITED: { const length = this.readLength(); this.pos += length; return; }
      case WIRE_FIXED32:
        if (this.end - this.pos < 4) this.fail(this.pos, 'truncated fixed32 field');
        this.pos += 4;
        return;
      default: this.fail(this.fieldStart, `unsupported wire type ${wireType}`);
    }
  }

  /** Fails unless the field just tagged has the wire type its schema says. */
  expect(tag: number, wireType: number, fieldName: string): void {
    if ((tag & 7) !== wireType) {
      this.fail(this.fieldStart, `field ${tag >>> 3} (${fieldName}) has wire type ${tag & 7} (${wireTypeName(tag & 7)}), expected ${wireType} (${wireTypeName(wireType)})`);
    }
  }
}

const utf8 = new TextDecoder('utf-8');
const utf8Encoder = new TextEncoder();

export function varintSize(value: number): number {
  if (value < 0) return 10; // negative int32 values are sign-extended to 64 bits
  let size = 1;
  while (value >= 128) { value = Math.floor(value / 128); size++; }
  return size;
}

/** Appends fields of one message. */
export class ProtoWriter {
  private buf: Uint8Array;
  private view: DataView;
  private pos = 0;

  constructor(initialBytes = 256) {
    this.buf = new Uint8Array(initialBytes);
    this.view = new DataView(this.buf.buffer);
  }

  private reserve(bytes: number): void {
    if (this.pos + bytes <= this.buf.length) return;
    let size = this.buf.length * 2;
    while (size < this.pos + bytes) size *= 2;
    const grown = new Uint8Array(size);
    grown.set(this.buf.subarray(0, this.pos));
    this.buf = grown;
    this.view = new DataView(grown.buffer);
  }

  /** Non-negative integer up to 2^53, or a negative int32 (written sign-extended, 10 bytes). */
  varint(value: number): this {
    this.reserve(10);
    const buf = this.buf;
    if (value < 0) {
      // two's complement over 64 bits: low 32 bits as they are, high 32 bits all ones
      let low = value >>> 0;
      for (let k = 0; k < 4; k++) { buf[this.pos++] = (low & 0x7f) | 0x80; low >>>= 7; }
      buf[this.pos++] = (low & 0x0f) | 0x70 | 0x80; // bits 28-31, then ones for bits 32-34
      for (let k = 0; k < 4; k++) buf[this.pos++] = 0xff;
      buf[this.pos++] = 0x01;
      return this;
    }
    while (value >= 128) {
      buf[this.pos++] = (value % 128) | 0x80;
      value = Math.floor(value / 128);
    }
    buf[this.pos++] = value;
    return this;
  }

  tag(field: number, wireType: number): this {
    return this.varint(field * 8 + wireType);
  }

  /** proto3: fields at their default are not written */
  uintField(field: number, value: number): this {
    if (value !== 0) this.tag(field, WIRE_VARINT).varint(value);
    return this;
  }

  doubleField(field: number, value: number): this {
    // -0 is not the default (its bits differ), so it is written
    if (value !== 0 || Object.is(value, -0)) {
      this.tag(field, WIRE_FIXED64);
      this.reserve(8);
      this.view.setFloat64(this.pos, value, true);
      this.pos += 8;
    }
    return this;
  }

  stringField(field: number, text: string): this {
    if (text.length > 0) this.bytesField(field, utf8Encoder.encode(text));
    return this;
  }

  bytesField(field: number, bytes: Uint8Array): this {
    this.tag(field, WIRE_LENGTH_DELIMITED).varint(bytes.length);
    this.reserve(bytes.length);
    this.buf.set(bytes, this.pos);
    this.pos += bytes.length;
    return this;
  }

  /** A sub-message: always written when present, even when empty. */
  messageField(field: number, bytes: Uint8Array): this {
    return this.bytesField(field, bytes);
  }

  packedDoubles(field: number, values: ArrayLike<number>, count = values.length): this {
    if (count === 0) return this;
    this.tag(field, WIRE_LENGTH_DELIMITED).varint(count * 8);
    this.reserve(count * 8);
    for (let k = 0; k < count; k++) {
      this.view.setFloat64(this.pos, values[k], true);
      this.pos += 8;
    }
    return this;
  }

  /** Packed int32 (negative values take 10 bytes) or uint32 (values must be >= 0). */
  packedVarints(field: number, values: ArrayLike<number>, count = values.length): this {
    if (count === 0) return this;
    let size = 0;
    for (let k = 0; k < count; k++) size += varintSize(values[k]);
    this.tag(field, WIRE_LENGTH_DELIMITED).varint(size);
    for (let k = 0; k < count; k++) this.varint(values[k]);
    return this;
  }

  get length(): number {
    return this.pos;
  }

  /** A copy of the message bytes; the writer can then be reset and reused. */
  finish(): Uint8Array {
    return this.buf.slice(0, this.pos);
  }

  reset(): void {
    this.pos = 0;
  }
}

/** The delimited form of one message: varint length, then the bytes. */
export function delimit(message: Uint8Array): Uint8Array {
  const prefix = varintSize(message.length);
  const out = new Uint8Array(prefix + message.length);
  let value = message.length;
  let pos = 0;
  while (value >= 128) { out[pos++] = (value % 128) | 0x80; value = Math.floor(value / 128); }
  out[pos++] = value;
  out.set(message, pos);
  return out;
}
