// The per-event CSV of `jetlag run --per-event FILE.csv`: one row per clustered event, in the
// order results come back (input order), for users who plot latency themselves.
//
//   event,towers,service_ns                                      closed loop
//   event,towers,service_ns,scheduled_ns,start_ns,done_ns        open loop
//
// towers: towers that entered clustering; service_ns: the engine's time on the event inside
// the worker. Open loop: scheduled_ns (the event's arrival time), start_ns (its start in a
// worker) and done_ns (its result back on the main thread), all in ns since the first event's
// scheduled arrival. Rows are gathered into blocks of about 64 KiB and written as they fill
// (TextFileWriter), so memory stays bounded whatever the run's length; the file is written
// under a temporary name and put in place when the run ends (output-target.ts).

import { TextFileWriter } from './text-file-writer.js';
import type { WriterOptions } from './output-file.js';

export const PER_EVENT_HEADER_CLOSED = 'event,towers,service_ns';
export const PER_EVENT_HEADER_OPEN = 'event,towers,service_ns,scheduled_ns,start_ns,done_ns';

export class PerEventWriter {
  private originNs = NaN;
  private pending: Promise<void> | undefined;
  private failure: Error | null = null;

  private constructor(private readonly out: TextFileWriter, readonly openLoop: boolean) {}

  static async open(path: string, openLoop: boolean, options: WriterOptions = {}): Promise<PerEventWriter> {
    const out = await TextFileWriter.open(path, options);
    const writer = new PerEventWriter(out, openLoop);
    writer.track(out.write(`${openLoop ? PER_EVENT_HEADER_OPEN : PER_EVENT_HEADER_CLOSED}\n`));
    return writer;
  }

  private track(pending: Promise<void> | undefined): void {
    if (!pending) return;
    this.pending = pending;
    pending.catch((error: Error) => { this.failure ??= error; });
  }

  /** One clustered event; the times are ignored in a closed loop. */
  add(event: number, towers: number, serviceNs: number, scheduledNs: number, startNs: number, doneNs: number): void {
    let row = `${event},${towers},${Math.round(serviceNs)}`;
    if (this.openLoop) {
      if (Number.isNaN(this.originNs)) this.originNs = scheduledNs;
      const origin = this.originNs;
      row += `,${Math.round(scheduledNs - origin)},${Math.round(startNs - origin)},${Math.round(doneNs - origin)}`;
    }
    this.track(this.out.write(row + '\n'));
  }

  async close(): Promise<void> {
    if (this.pending) await this.pending.catch(() => undefined);
    if (this.failure) throw this.failure;
    await this.out.close();
  }

  abort(): Promise<void> {
    return this.out.abort();
  }
}
