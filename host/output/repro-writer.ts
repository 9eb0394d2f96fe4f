// A small event file of the events on which two clusterers disagree (`jetlag run --check
// --repro FILE`), so that `jetlag cluster --engine reference|wasm FILE` reproduces each
// disagreement alone. Events are written whole: either the event record exactly as it was
// read (raw deposits, error text and unknown fields included) or its towers.
//
// API
//   ReproWriter.open(path, { grid, source?, engine?, gzip? }): Promise<ReproWriter>
//     header record first (kind events, the source's grid, a label naming source and engine);
//     written to a temporary name and renamed into place by close() (record-writer.ts)
//   .writeRecord(event, recordBytes)   an EventRecord message as read from the source
//   .writeEvent(fields)                an event from its fields (event-codec.ts)
//     both return a promise to await when the stream wants draining, else undefined; event
//     numbers must increase (event files are in increasing event order), else they throw
//   .events                            events written so far
//   .close(): Promise<number>          the number of events; a file with no disagreement
//                                      still has its header, so an old file is never left
//   .abort(): Promise<void>

import { EventFileWriter } from './record-writer.js';
import type { EventRecordFields } from '../formats/event-codec.js';
import type { Grid } from '../types.js';
import { producerName } from '../version.js';

export interface ReproOptions {
  grid: Grid;
  /** the file the events came from, named in the label */
  source?: string;
  /** the clusterer that disagreed with the reference, named in the label */
  engine?: string;
  gzip?: boolean;
  /** replace an existing file */
  force?: boolean;
}

export class ReproWriter {
  events = 0;
  private lastEvent = -1;

  private constructor(private readonly writer: EventFileWriter) {}

  static async open(path: string, options: ReproOptions): Promise<ReproWriter> {
    const label = `events on which ${options.engine ?? 'the engine'} and the reference disagree` +
      (options.source !== undefined ? `, from ${options.source}` : '');
    const writer = await EventFileWriter.open(path, { grid: options.grid, producer: producerName('run --check'), label }, { gzip: Boolean(options.gzip), force: options.force });
    return new ReproWriter(writer);
  }

  private claim(event: number): void {
    if (!Number.isSafeInteger(event) || event < 0) throw new Error(`repro: event number must be an integer >= 0, got ${event}`);
    if (event <= this.lastEvent) {
      throw new Error(`repro: event ${event} comes after event ${this.lastEvent}; an event file holds events in increasing order`);
    }
    this.lastEvent = event;
    this.events++;
  }

  /** The event record as read (message bytes without the length prefix), copied verbatim. */
  writeRecord(event: number, recordBytes: Uint8Array): Promise<void> | undefined {
    this.claim(event);
    return this.writer.records.write(recordBytes);
  }

  writeEvent(fields: EventRecordFields): Promise<void> | undefined {
    this.claim(fields.event);
    return this.writer.writeEvent(fields);
  }

  async close(): Promise<number> {
    await this.writer.close();
    return this.events;
  }

  abort(): Promise<void> {
    return this.writer.abort();
  }
}
