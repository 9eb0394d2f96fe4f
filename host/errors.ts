// The kinds of failure every layer reports: bad usage (exit 2), unreadable input (exit 2, one
// line naming the file, the event and the byte offset) and an output that cannot be written
// (exit 2). Shared by readers, codecs and the command line, so that nothing low imports the
// command line.

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
  /** line number (from 1) in a text input */
  readonly line: number | undefined;
  /** the text after the place: what is wrong */
  readonly detail: string;
  constructor(file: string, detail: string, event?: number, offset?: number, line?: number) {
    super(`${describePlace(file, event, line, offset)}: ${detail}`);
    this.name = 'InputError';
    this.file = file;
    this.event = event;
    this.offset = offset;
    this.line = line;
    this.detail = detail;
  }
}

/** `FILE, event N (line L), byte B`, leaving out what is not known (`FILE, line L, byte B`). */
export function describePlace(file: string, event?: number, line?: number, offset?: number): string {
  const where = [file];
  if (event !== undefined) where.push(line !== undefined ? `event ${event} (line ${line})` : `event ${event}`);
  else if (line !== undefined) where.push(`line ${line}`);
  if (offset !== undefined) where.push(`byte ${offset}`);
  return where.join(', ');
}

/** An output that cannot be written (exists without --force, a directory, no permission): one line, exit 2. */
export class OutputError extends Error {
  readonly path: string;
  readonly code: string | undefined;
  constructor(path: string, detail: string, code?: string) {
    super(`cannot write ${path}: ${detail}`);
    this.name = 'OutputError';
    this.path = path;
    this.code = code;
  }
}
