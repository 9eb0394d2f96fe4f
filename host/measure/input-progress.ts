// Progress of a command that reads an input record by record (cluster, compare, export): the
// command hands onRecord to the reader's loop, and a ProgressBar draws from the counts. The
// percentage is of bytes, and only for an uncompressed file: gzip offsets count inflated bytes
// and stdin has no size, so those show events and rate only.

import { closeSync, openSync, readSync, statSync } from 'node:fs';
import { ProgressBar } from './progress.js';

/** The size of a plain (not gzip) file, 0 when unknown: stdin, gzip, or not a readable file. */
export function plainFileBytes(path: string): number {
  if (path === '-') return 0;
  try {
    const fd = openSync(path, 'r');
    try {
      const magic = Buffer.alloc(2);
      if (readSync(fd, magic, 0, 2, 0) === 2 && magic[0] === 0x1f && magic[1] === 0x8b) return 0;
    } finally {
      closeSync(fd);
    }
    return statSync(path).size;
  } catch {
    return 0;
  }
}

export class RecordProgress {
  private events = 0;
  private offset = 0;
  private readonly bar: ProgressBar;

  /** enabled: stderr is a terminal and --quiet is off; when not, nothing is ever drawn */
  constructor(out: NodeJS.WritableStream, input: string, enabled: boolean) {
    this.bar = new ProgressBar(out, { eventsDone: () => this.events, bytesDone: () => this.offset }, { bytes: enabled ? plainFileBytes(input) : 0 }, enabled);
  }

  /** The reader's per-record call: one more record, starting at this byte offset. */
  readonly onRecord = (offset: number): void => {
    this.events++;
    this.offset = offset;
  };

  start(): void {
    this.bar.start();
  }

  stop(): void {
    this.bar.stop();
  }
}
