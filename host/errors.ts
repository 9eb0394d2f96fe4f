// The two kinds of failure every layer reports: bad usage (exit 2) and unreadable input (exit 2,
// one line naming the file, the event and the byte offset). Shared by readers, codecs and the
// command line, so that nothing low imports the command line.

export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** A failure to read input: one line that names the file, event and byte offset where known. */
export class InputError extends Error {
  readonly file: string;
  readonly event: number | undefined;
  readonly offset: number | undefined;
  constructor(file: string, detail: string, event?: number, offset?: number) {
    const where = [file];
    if (event !== undefined) where.push(`event ${event}`);
    if (offset !== undefined) where.push(`byte ${offset}`);
    super(`${where.join(', ')}: ${detail}`);
    this.name = 'InputError';
    this.file = file;
    this.event = event;
    this.offset = offset;
  }
}
