// The grooming settings of a jets file header (message GroomingSettings in proto/jetlag.proto,
// field 8 of ClusterSettings): trimming and soft drop of clustering-spec.md section 12. Each
// groomer ran when its sub-message is present; a header without the message means none ran,
// as in files written before grooming existed.

import type { GroomingSettings, SoftDropSettings, TrimSettings } from '../types.js';
import { ProtoWriter, WireCursor, WIRE_FIXED64, WIRE_LENGTH_DELIMITED } from './wire.js';

export function encodeGroomingSettings(grooming: GroomingSettings): Uint8Array {
  const out = new ProtoWriter(64);
  if (grooming.trim) {
    out.messageField(1, new ProtoWriter(32).doubleField(1, grooming.trim.subjetRadius).doubleField(2, grooming.trim.ptFraction).finish());
  }
  if (grooming.softDrop) {
    out.messageField(2, new ProtoWriter(32).doubleField(1, grooming.softDrop.zCut).doubleField(2, grooming.softDrop.beta).finish());
  }
  return out.finish();
}

/** Two doubles, fields 1 and 2, of a sub-message ending at `end`. */
function readTwoDoubles(cursor: WireCursor, end: number, names: [string, string]): [number, number] {
  const values: [number, number] = [0, 0];
  // fields of a sub-message must end inside it
  const outerEnd = cursor.end;
  cursor.end = end;
  while (cursor.pos < end) {
    const tag = cursor.readTag();
    const field = tag >>> 3;
    if (field === 1 || field === 2) {
      cursor.expect(tag, WIRE_FIXED64, names[field - 1]);
      values[field - 1] = cursor.readDouble();
    } else {
      cursor.skip(tag & 7);
    }
  }
  cursor.end = outerEnd;
  return values;
}

/** Reads the message's fields up to `end`; throws Error("at record byte N: ...") on a broken one. */
export function decodeGroomingSettings(cursor: WireCursor, end: number): GroomingSettings {
  let trim: TrimSettings | null = null;
  let softDrop: SoftDropSettings | null = null;
  const outerEnd = cursor.end;
  cursor.end = end;
  while (cursor.pos < end) {
    const tag = cursor.readTag();
    switch (tag >>> 3) {
      case 1: {
        cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'grooming.trim');
        const length = cursor.readLength();
        const [subjetRadius, ptFraction] = readTwoDoubles(cursor, cursor.pos + length, ['grooming.trim.subjet_radius', 'grooming.trim.pt_fraction']);
        trim = { subjetRadius, ptFraction };
        break;
      }
      case 2: {
        cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'grooming.soft_drop');
        const length = cursor.readLength();
        const [zCut, beta] = readTwoDoubles(cursor, cursor.pos + length, ['grooming.soft_drop.z_cut', 'grooming.soft_drop.beta']);
        softDrop = { zCut, beta };
        break;
      }
      default: cursor.skip(tag & 7);
    }
  }
  cursor.end = outerEnd;
  // values are checked where the settings are used (checkTrim, checkSoftDrop)
  return { trim, softDrop };
}
