// An engine program's stderr, kept for its fault lines: a temporary file (its name removed at
// once) opened for appending, handed to the program as its stderr. A pipe would need reading
// while the worker waits in its blocking read of the answer (exec-process.ts); a program that
// writes more than a pipe holds during one event would then wait for jetlag, and time out. A
// file never makes the program wait. It is cut back after an event when it has grown past
// KEEP_BYTES, keeping its last TAIL_BYTES, so a chatty program does not fill the disk.
//
//   new StderrFile()   .fd (for spawn's stdio), .trim() after an answer, .tail(), .close()

import { closeSync, constants, fstatSync, ftruncateSync, mkdtempSync, openSync, readSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** the bytes kept for a fault line, at most */
export const TAIL_BYTES = 4096;
/** the file is cut back past this size */
const KEEP_BYTES = 1 << 18;

export class StderrFile {
  fd: number;
  /** the end of what was written before the last cut */
  private before: Buffer = Buffer.alloc(0);

  constructor() {
    const dir = mkdtempSync(join(tmpdir(), 'jetlag-engine-stderr-'));
    try {
      // O_APPEND is on the open file, which the program shares: its writes go to the end, also after a cut
      this.fd = openSync(join(dir, 'stderr'), constants.O_RDWR | constants.O_APPEND | constants.O_CREAT | constants.O_EXCL, 0o600);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }

  /** After an event: past KEEP_BYTES, keeps the last TAIL_BYTES and empties the file. */
  trim(): void {
    if (this.fd < 0 || fstatSync(this.fd).size <= KEEP_BYTES) return;
    this.before = this.lastBytes();
    ftruncateSync(this.fd, 0);
  }

  /** The last TAIL_BYTES the program wrote (across a cut). */
  tail(): Buffer {
    if (this.fd < 0) return this.before;
    const recent = this.lastBytes();
    if (recent.length >= TAIL_BYTES) return recent;
    const joined = Buffer.concat([this.before, recent]);
    return joined.subarray(Math.max(0, joined.length - TAIL_BYTES));
  }

  close(): void {
    if (this.fd < 0) return;
    this.before = this.tail();
    closeSync(this.fd);
    this.fd = -1;
  }

  private lastBytes(): Buffer {
    const size = fstatSync(this.fd).size;
    const length = Math.min(size, TAIL_BYTES);
    const bytes = Buffer.alloc(length);
    let filled = 0;
    while (filled < length) {
      const got = readSync(this.fd, bytes, filled, length - filled, size - length + filled);
      if (got === 0) break;
      filled += got;
    }
    return bytes.subarray(0, filled);
  }
}
