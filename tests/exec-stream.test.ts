// The stream contract between jetlag and an engine program (host/pipeline/exec-stream.ts) and
// how `--engine exec:` splits its command (host/pipeline/exec-command.ts). The records are read
// back with protobufjs from proto/jetlag.proto, independent of jetlag's own codecs.

import { describe, expect, it } from 'vitest';
import { checkProgramHeader, encodeStreamEvent, encodeStreamHeader, readProgramAnswer } from '../host/pipeline/exec-stream.js';
import { splitCommand } from '../host/pipeline/exec-command.js';
import { decodeFileHeader, encodeFileHeader } from '../host/formats/file-header.js';
import { encodeJetsRecord } from '../host/formats/jets-codec.js';
import { UsageError } from '../host/errors.js';
import { DEFAULT_GRID, type ClusterSettings } from '../host/types.js';
import { loadJetlagSchema } from './support/proto-schema.js';

const SETTINGS: ClusterSettings = { p: -1, radius: 0.6, ptMin: 5, threshold: 0.5, recombination: 'wta' };

function undelimit(bytes: Uint8Array): Uint8Array {
  let pos = 0;
  while (bytes[pos] & 0x80) pos++;
  return bytes.subarray(pos + 1);
}

describe('the event stream', () => {
  it('has a header with the grid and every setting the program needs', () => {
    const header = loadJetlagSchema().lookupType('jetlag.FileHeader').toObject(
      loadJetlagSchema().lookupType('jetlag.FileHeader').decodeDelimited(encodeStreamHeader(DEFAULT_GRID, SETTINGS, 'jetlag tests', 'stream')),
      { enums: String, defaults: true },
    );
    expect(header.kind).toBe('FILE_KIND_EVENTS');
    expect(header.grid).toEqual({ etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 });
    expect(header.settings).toMatchObject({ p: -1, radius: 0.6, ptMin: 5, threshold: 0.5, recombination: 'RECOMBINATION_WINNER_TAKE_ALL' });
  });

  it('is read back by jetlag with its settings, while an event file without them still reads', () => {
    expect(decodeFileHeader(undelimit(encodeStreamHeader(DEFAULT_GRID, SETTINGS, 'p', 'l'))).settings).toEqual({ ...SETTINGS, engine: '' });
    const plain = encodeFileHeader({ kind: 'events', grid: DEFAULT_GRID, producer: 'jetlag tests', label: '' });
    expect(decodeFileHeader(plain).settings).toBeUndefined();
  });

  it('holds the towers above the threshold in increasing flat index', () => {
    const record = encodeStreamEvent(7, Int32Array.of(900, 12, 450, 3), Float64Array.of(2, 0.5, 1, 3), 0.5);
    const event = loadJetlagSchema().lookupType('jetlag.EventRecord').decodeDelimited(record) as unknown as { event: number; towerIndex: number[]; towerEt: number[] };
    expect(Number(event.event)).toBe(7);
    expect(event.towerIndex).toEqual([3, 450, 900]);
    expect(event.towerEt).toEqual([3, 1, 2]);
  });
});

describe("the program's answers", () => {
  const jetsHeader = (settings: ClusterSettings) => encodeFileHeader({ kind: 'jets', grid: DEFAULT_GRID, producer: 'x', label: '', settings: { ...settings, engine: 'mine' } });

  it('need a jets header with the stream settings', () => {
    expect(checkProgramHeader(jetsHeader(SETTINGS), DEFAULT_GRID, SETTINGS)).toEqual({ engineName: 'mine' });
    expect(checkProgramHeader(jetsHeader({ ...SETTINGS, radius: 0.4 }), DEFAULT_GRID, SETTINGS)).toEqual({ problem: 'its header has radius 0.4; the stream asked for radius 0.6' });
    expect(checkProgramHeader(encodeFileHeader({ kind: 'events', grid: DEFAULT_GRID, producer: 'x', label: '' }), DEFAULT_GRID, SETTINGS)).toEqual({ problem: 'its header says kind events, expected jets' });
  });

  it('take event 0 from a record that leaves the event number out, and no other event', () => {
    const unnumbered = encodeJetsRecord({ event: 0, clusterTimeNs: 5 });
    expect(readProgramAnswer(unnumbered, 0, [0]).ok).toBe(true);
    expect(readProgramAnswer(unnumbered, 3, [3])).toEqual({ ok: false, problem: 'the jets record has no event number (field 1); event 3 was due' });
  });

  it('name an answer for an event never sent', () => {
    expect(readProgramAnswer(encodeJetsRecord({ event: 40 }), 3, [3, 4])).toEqual({ ok: false, problem: 'answered event 40, which was not sent to it (event 3 was due)' });
  });
});

describe('the exec: command', () => {
  it('is split into words like a shell splits a simple command', () => {
    expect(splitCommand(`./my-clusterer --radius 'a b' "c \\"d\\"" e\\ f`, 'run')).toEqual(['./my-clusterer', '--radius', 'a b', 'c "d"', 'e f']);
  });

  it('refuses shell features, pointing to sh -c', () => {
    expect(() => splitCommand('my-clusterer | tee log', 'run')).toThrow(UsageError);
    expect(() => splitCommand('my-clusterer | tee log', 'run')).toThrow("write exec:sh -c '…' to use a shell");
    expect(splitCommand(`sh -c 'my-clusterer | tee log'`, 'run')).toEqual(['sh', '-c', 'my-clusterer | tee log']);
  });

  it('refuses an empty command and an unclosed quote', () => {
    expect(() => splitCommand('  ', 'cluster')).toThrow('cluster: --engine exec: needs a command');
    expect(() => splitCommand(`a 'b`, 'cluster')).toThrow("unclosed ' quote");
  });
});
