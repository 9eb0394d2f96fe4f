// The two pipes between jetlag and an engine program's stdin and stdout, made so that jetlag's
// ends block: the worker writes an event with one writeSync and waits for the answer in
// readSync, no event loop between (exec-process.ts says why). child_process's 'pipe' stdio
// gives non-blocking sockets owned by the event loop, so these are named pipes (mkfifo), each
// end opened blocking; the names are removed as soon as both ends are open.
//
// Opening a named pipe blocks until the other end is opened, so each is first opened
// read-write (on Linux that never blocks), which lets the two real ends open at once; the
// read-write keeper is closed again, so that the program's exit is seen as end of file.
//
//   openProgramPipes(): ProgramPipes    jetlag's ends, the program's ends (for spawn's stdio)
//   closeChildEnds(pipes)               after spawn: only the program holds its ends
//   closeJetlagEnds(pipes)              when the instance ends

import { execFileSync } from 'node:child_process';
import { closeSync, constants, mkdtempSync, openSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export interface ProgramPipes {
  /** jetlag writes events here (blocking) */
  eventsOut: number;
  /** jetlag reads answers here (blocking) */
  answersIn: number;
  /** the program's stdin and stdout, -1 once closed in jetlag */
  childStdin: number;
  childStdout: number;
}

/** A named pipe's reading and writing ends, both blocking. */
function openBothEnds(path: string): { reading: number; writing: number } {
  const keeper = openSync(path, constants.O_RDWR);
  try {
    const reading = openSync(path, constants.O_RDONLY);
    const writing = openSync(path, constants.O_WRONLY);
    return { reading, writing };
  } finally {
    closeSync(keeper);
  }
}

export function openProgramPipes(): ProgramPipes {
  const dir = mkdtempSync(join(tmpdir(), 'jetlag-engine-'));
  try {
    const eventsPath = join(dir, 'events');
    const answersPath = join(dir, 'answers');
    try {
      execFileSync('mkfifo', ['-m', '600', eventsPath, answersPath], { stdio: ['ignore', 'ignore', 'pipe'] });
    } catch (error) {
      throw new Error(`cannot make the engine program's pipes with mkfifo: ${(error as Error).message.split('\n')[0]}`);
    }
    const events = openBothEnds(eventsPath);
    const answers = openBothEnds(answersPath);
    return { eventsOut: events.writing, childStdin: events.reading, answersIn: answers.reading, childStdout: answers.writing };
  } finally {
    // the open ends keep the pipes; their names are not needed again
    rmSync(dir, { recursive: true, force: true });
  }
}

function closeQuietly(fd: number): void {
  if (fd < 0) return;
  try {
    closeSync(fd);
  } catch {
    // already closed: nothing to release
  }
}

export function closeChildEnds(pipes: ProgramPipes): void {
  closeQuietly(pipes.childStdin);
  closeQuietly(pipes.childStdout);
  pipes.childStdin = -1;
  pipes.childStdout = -1;
}

export function closeJetlagEnds(pipes: ProgramPipes): void {
  closeChildEnds(pipes);
  closeQuietly(pipes.eventsOut);
  closeQuietly(pipes.answersIn);
  pipes.eventsOut = -1;
  pipes.answersIn = -1;
}
