// From one event record to the towers a clusterer takes: decode (event-codec.ts), then
// validate exactly as clustering-spec.md section 1 says, before any threshold. Runs in the
// workers, once per event; one EventTowerReader per worker keeps its scratch.
//
// API
//   new EventTowerReader(grid | gridTables, { allowDuplicates? })
//   .read(bytes): EventTowers        (= .decode(bytes) ?? .validate(), for timing the two apart)
//     { ok: true,  event, towerIndex, towerEt, outsideAcceptance, fromDeposits }
//     { ok: false, event (undefined when the record broke before its event number), problem }
//   Pre-binned towers come back in input order as views of the reader's scratch, valid
//   until the next read(); binned deposits come back in increasing tower index (owned).
//   Plain objects only, so a result survives postMessage.
//
// An event is invalid (problem, one line) when its record breaks the wire format, carries an
// error text (e.g. a bad CSV row kept by import), holds both towers and raw deposits, has
// tower arrays of different lengths, or grid.ts finds a bad tower or deposit (the first one
// in input order). The caller adds file and record offset.

import { binDeposits, findInvalidTower, makeGridTables, type GridTables } from '../clustering/grid.js';
import { EventRecordDecoder } from '../formats/event-codec.js';
import type { Grid } from '../types.js';

export type EventTowers =
  | { ok: true; event: number; towerIndex: Int32Array; towerEt: Float64Array; outsideAcceptance: number; fromDeposits: boolean }
  | { ok: false; event: number | undefined; problem: string };

export interface EventTowerOptions {
  /** pre-binned input: let a tower index repeat (spec: "a summing option may exist, off by default") */
  allowDuplicates?: boolean;
}

export class EventTowerReader {
  readonly tables: GridTables;
  private readonly decoder = new EventRecordDecoder();
  private readonly seen: Uint8Array;
  private readonly allowDuplicates: boolean;

  constructor(grid: Grid | GridTables, options: EventTowerOptions = {}) {
    this.tables = 'towerTotal' in grid ? grid : makeGridTables(grid);
    this.seen = new Uint8Array(this.tables.towerTotal);
    this.allowDuplicates = options.allowDuplicates ?? false;
  }

  read(bytes: Uint8Array): EventTowers {
    return this.decode(bytes) ?? this.validate();
  }

  /** read()'s first half (for a caller that times decoding apart): null when the record decoded. */
  decode(bytes: Uint8Array): EventTowers | null {
    const d = this.decoder;
    try {
      d.decode(bytes);
    } catch (error) {
      return { ok: false, event: d.hasEvent ? d.event : undefined, problem: `bad event record: ${(error as Error).message}` };
    }
    return null;
  }

  /** read()'s second half: validates (and bins) the record that decode() took last. */
  validate(): EventTowers {
    const d = this.decoder;
    const event = d.event;
    if (d.error !== '') return { ok: false, event, problem: d.error };
    const towers = d.towerIndexCount > 0 || d.towerEtCount > 0;
    const deposits = d.depositEtaCount > 0 || d.depositPhiCount > 0 || d.depositEtCount > 0;
    if (towers && deposits) return { ok: false, event, problem: 'the record holds both towers and raw deposits' };
    if (deposits) {
      const binned = binDeposits(
        this.tables,
        d.depositEta.subarray(0, d.depositEtaCount),
        d.depositPhi.subarray(0, d.depositPhiCount),
        d.depositEt.subarray(0, d.depositEtCount),
      );
      if (binned.problem !== null) return { ok: false, event, problem: binned.problem };
      return { ok: true, event, towerIndex: binned.towerIndex, towerEt: binned.towerEt, outsideAcceptance: binned.outsideAcceptance, fromDeposits: true };
    }
    if (d.towerIndexCount !== d.towerEtCount) {
      return { ok: false, event, problem: `tower_index has ${d.towerIndexCount} entries but tower_et has ${d.towerEtCount}` };
    }
    const towerIndex = d.towerIndex.subarray(0, d.towerIndexCount);
    const towerEt = d.towerEt.subarray(0, d.towerEtCount);
    const problem = findInvalidTower(this.tables, towerIndex, towerEt, this.seen, this.allowDuplicates);
    if (problem !== null) return { ok: false, event, problem };
    return { ok: true, event, towerIndex, towerEt, outsideAcceptance: 0, fromDeposits: false };
  }
}
