// The error of an engine program's run that ends it with one line (exit 2), not a failure of
// jetlag's own: the program cannot be started or keeps failing, or this system lacks what the
// transport to it needs (exec-fifo.ts). The line names the program.

export class ExecEngineError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ExecEngineError';
  }
}

/**
 * An error from a pool worker comes back as a plain Error (structured cloning keeps only the
 * message of a class of our own): one whose message is a program's line, which starts with
 * its label, is that program's ExecEngineError again.
 */
export function asProgramError(error: unknown, label: string): unknown {
  if (error instanceof Error && !(error instanceof ExecEngineError) && (error.message.startsWith(`${label}: `) || error.message.startsWith(`${label} failed `))) {
    return new ExecEngineError(error.message);
  }
  return error;
}
