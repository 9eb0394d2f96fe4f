// The first record of every jetlag file (message FileHeader in proto/jetlag.proto).
//
// API
//   encodeFileHeader(header): Uint8Array            message bytes (no length prefix)
//   decodeFileHeader(bytes): FileHeader              throws Error("at record byte N: ...") on
//                                                    broken wire format, Error on a header that
//                                                    is not ours or not usable
//   looksLikeFileHeader(bytes): boolean              true when the bytes decode as a header
//                                                    with our signature (content detection)

import { checkGrid } from '../clustering/grid.js';
import type { ClusterSettings, Grid, GroomingSettings, PileupSettings, Recombination } from '../types.js';
import { decodeGroomingSettings, encodeGroomingSettings } from './grooming-settings-codec.js';
import { decodePileupSettings, encodePileupSettings } from './pileup-settings-codec.js';
import { ProtoWriter, WireCursor, WIRE_FIXED64, WIRE_LENGTH_DELIMITED, WIRE_VARINT } from './wire.js';

export const FILE_SIGNATURE = 'jetlag';
export const FORMAT_VERSION = 1;

export type FileKind = 'events' | 'jets';

/** Settings a jets file was made with, and by which clusterer. */
export interface JetsFileSettings extends ClusterSettings {
  engine: string;
  /** the pileup steps the jets were made with (spec part two); absent when none ran */
  pileup?: PileupSettings;
  /** trimming and soft drop of each reported jet (spec section 12); absent when none ran */
  grooming?: GroomingSettings;
}

export interface FileHeader {
  kind: FileKind;
  grid: Grid;
  /** what wrote the file, e.g. "jetlag 0.1.0 generate" */
  producer: string;
  label: string;
  /**
   * jets files: the settings the jets were made with (required); events files: optional, the
   * settings a clustering program is to use (the event stream jetlag writes to an engine
   * program, pipeline/exec-engine.ts); absent in ordinary event files
   */
  settings?: JetsFileSettings;
  formatVersion: number;
}

const KIND_CODES: Record<FileKind, number> = { events: 1, jets: 2 };
const RECOMBINATION_CODES: Record<Recombination, number> = { e: 0, wta: 1 };

export function encodeFileHeader(header: Omit<FileHeader, 'formatVersion'> & { formatVersion?: number }): Uint8Array {
  checkGrid(header.grid, 'file header grid');
  if (header.kind === 'jets' && !header.settings) throw new Error('a jets file header needs its cluster settings');
  const grid = new ProtoWriter(64)
    .doubleField(1, header.grid.etaMin)
    .doubleField(2, header.grid.etaMax)
    .uintField(3, header.grid.etaBins)
    .uintField(4, header.grid.phiBins)
    .finish();
  const out = new ProtoWriter(256)
    .stringField(1, FILE_SIGNATURE)
    .uintField(2, header.formatVersion ?? FORMAT_VERSION)
    .uintField(3, KIND_CODES[header.kind])
    .messageField(4, grid)
    .stringField(5, header.producer)
    .stringField(6, header.label);
  if (header.settings) {
    const s = header.settings;
    const settings = new ProtoWriter(64)
      .doubleField(1, s.p)
      .doubleField(2, s.radius)
      .doubleField(3, s.ptMin)
      .doubleField(4, s.threshold)
      .uintField(5, RECOMBINATION_CODES[s.recombination])
      .stringField(6, s.engine);
    if (s.pileup) settings.messageField(7, encodePileupSettings(s.pileup));
    if (s.grooming && (s.grooming.trim || s.grooming.softDrop)) settings.messageField(8, encodeGroomingSettings(s.grooming));
    out.messageField(7, settings.finish());
  }
  return out.finish();
}


interface RawHeader {
  signature: string;
  formatVersion: number;
  kindCode: number;
  grid: Grid | null;
  producer: string;
  label: string;
  settings: (Omit<JetsFileSettings, 'recombination'> & { recombinationCode: number }) | null;
}

function readGrid(cursor: WireCursor, end: number): Grid {
  const grid: Grid = { etaMin: 0, etaMax: 0, etaBins: 0, phiBins: 0 };
  // fields of a sub-message must end inside it
  const outerEnd = cursor.end;
  cursor.end = end;
  while (cursor.pos < end) {
    const tag = cursor.readTag();
    switch (tag >>> 3) {
      case 1: cursor.expect(tag, WIRE_FIXED64, 'grid.eta_min'); grid.etaMin = cursor.readDouble(); break;
      case 2: cursor.expect(tag, WIRE_FIXED64, 'grid.eta_max'); grid.etaMax = cursor.readDouble(); break;
      case 3: cursor.expect(tag, WIRE_VARINT, 'grid.eta_bins'); grid.etaBins = cursor.readVarint(); break;
      case 4: cursor.expect(tag, WIRE_VARINT, 'grid.phi_bins'); grid.phiBins = cursor.readVarint(); break;
      default: cursor.skip(tag & 7);
    }
  }
  cursor.end = outerEnd;
  return grid;
}

function readSettings(cursor: WireCursor, end: number): NonNullable<RawHeader['settings']> {
  const s: NonNullable<RawHeader['settings']> = { p: 0, radius: 0, ptMin: 0, threshold: 0, recombinationCode: 0, engine: '' };
  // fields of a sub-message must end inside it
  const outerEnd = cursor.end;
  cursor.end = end;
  while (cursor.pos < end) {
    const tag = cursor.readTag();
    switch (tag >>> 3) {
      case 1: cursor.expect(tag, WIRE_FIXED64, 'settings.p'); s.p = cursor.readDouble(); break;
      case 2: cursor.expect(tag, WIRE_FIXED64, 'settings.radius'); s.radius = cursor.readDouble(); break;
      case 3: cursor.expect(tag, WIRE_FIXED64, 'settings.pt_min'); s.ptMin = cursor.readDouble(); break;
      case 4: cursor.expect(tag, WIRE_FIXED64, 'settings.threshold'); s.threshold = cursor.readDouble(); break;
      case 5: cursor.expect(tag, WIRE_VARINT, 'settings.recombination'); s.recombinationCode = cursor.readVarint(); break;
      case 6: cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'settings.engine'); s.engine = cursor.readString(); break;
      case 7: {
        cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'settings.pileup');
        const length = cursor.readLength();
        s.pileup = decodePileupSettings(cursor, cursor.pos + length);
        break;
      }
      case 8: {
        cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'settings.grooming');
        const length = cursor.readLength();
        s.grooming = decodeGroomingSettings(cursor, cursor.pos + length);
        break;
      }
      default: cursor.skip(tag & 7);
    }
  }
  cursor.end = outerEnd;
  return s;
}

/** Wire-level decode only; throws Error("at record byte N: ...") on broken wire format. */
function readRawHeader(bytes: Uint8Array): RawHeader {
  const cursor = new WireCursor(bytes);
  const raw: RawHeader = { signature: '', formatVersion: 0, kindCode: 0, grid: null, producer: '', label: '', settings: null };
  while (cursor.pos < cursor.end) {
    const tag = cursor.readTag();
    switch (tag >>> 3) {
      case 1: cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'signature'); raw.signature = cursor.readString(); break;
      case 2: cursor.expect(tag, WIRE_VARINT, 'format_version'); raw.formatVersion = cursor.readVarint(); break;
      case 3: cursor.expect(tag, WIRE_VARINT, 'kind'); raw.kindCode = cursor.readVarint(); break;
      case 4: {
        cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'grid');
        const length = cursor.readLength();
        raw.grid = readGrid(cursor, cursor.pos + length);
        break;
      }
      case 5: cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'producer'); raw.producer = cursor.readString(); break;
      case 6: cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'label'); raw.label = cursor.readString(); break;
      case 7: {
        cursor.expect(tag, WIRE_LENGTH_DELIMITED, 'settings');
        const length = cursor.readLength();
        raw.settings = readSettings(cursor, cursor.pos + length);
        break;
      }
      default: cursor.skip(tag & 7);
    }
  }
  return raw;
}

export function looksLikeFileHeader(bytes: Uint8Array): boolean {
  try {
    return readRawHeader(bytes).signature === FILE_SIGNATURE;
  } catch {
    return false;
  }
}

/** longest producer, label or engine name a file header may carry */
export const MAX_HEADER_TEXT_CHARS = 65536;

export function decodeFileHeader(bytes: Uint8Array): FileHeader {
  const raw = readRawHeader(bytes);
  if (raw.signature !== FILE_SIGNATURE) {
    throw new Error(`not a jetlag file: the first record has signature ${JSON.stringify(raw.signature)}, expected "${FILE_SIGNATURE}"`);
  }
  if (raw.formatVersion > FORMAT_VERSION) {
    throw new Error(`file format version ${raw.formatVersion} is newer than this reader (version ${FORMAT_VERSION})`);
  }
  const kind: FileKind | undefined = raw.kindCode === 1 ? 'events' : raw.kindCode === 2 ? 'jets' : undefined;
  if (kind === undefined) throw new Error(`file header has unknown kind ${raw.kindCode} (expected 1 events or 2 jets)`);
  if (raw.grid === null) throw new Error('file header has no grid');
  checkGrid(raw.grid, 'file header grid');
  // free text is echoed into reports and outputs: a hostile header must not fill them
  for (const [name, text] of [['producer', raw.producer], ['label', raw.label], ['settings.engine', raw.settings?.engine ?? '']] as const) {
    if (text.length > MAX_HEADER_TEXT_CHARS) throw new Error(`file header ${name} is ${text.length} characters long, more than the limit of ${MAX_HEADER_TEXT_CHARS}`);
  }
  const header: FileHeader = { kind, grid: raw.grid, producer: raw.producer, label: raw.label, formatVersion: raw.formatVersion };
  if (kind === 'jets' && raw.settings === null) throw new Error('jets file header has no cluster settings');
  if (raw.settings !== null) {
    const { recombinationCode, ...rest } = raw.settings;
    if (recombinationCode !== 0 && recombinationCode !== 1) {
      throw new Error(`${kind} file header has unknown recombination ${recombinationCode} (expected 0 E-scheme or 1 winner-take-all)`);
    }
    header.settings = { ...rest, recombination: recombinationCode === 0 ? 'e' : 'wta' };
  }
  return header;
}
