// The error of an engine program's run that ends it with one line (exit 2), not a failure of
// jetlag's own: the program cannot be started or keeps failing, or this system lacks what the
// transport to it needs (exec-fifo.ts). The line names the program.

export class ExecEngineError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ExecEngineError';
  }
}
