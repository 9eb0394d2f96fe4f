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
//   checkPipePlatform(label)            once at start-up: one line (ExecEngineError) where this
//                                       system lacks what the pipes need
//   openProgramPipes(label): ProgramPipes    jetlag's ends, the program's ends (for spawn's stdio)
//   closeChildEnds(pipes)               after spawn: only the program holds its ends
//   closeJetlagEnds(pipes)              when the instance ends
//
// Failures are ExecEngineError lines naming the program; nothing opened is left open by one.

import { execFileSync } from 'node:child_process';
import { closeSync, constants, existsSync, mkdtempSync, openSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ExecEngineError } from './exec-error.js';

export interface ProgramPipes {
  /** jetlag writes events here (blocking) */
  eventsOut: number;
  /** jetlag reads answers here (blocking) */
  answersIn: number;
  /** the program's stdin and stdout, -1 once closed in jetlag */
  childStdin: number;
  childStdout: number;
}

/** where the watchdog finds the answers pipe to write its wake-up byte (exec-watchdog.ts) */
export const OWN_FDS_DIR = '/proc/self/fd';
let platformChecked = false;

/**
 * The pipes need Linux: a named pipe opened read-write without blocking, and the process's own
 * fds under /proc for the watchdog's wake-up byte; without them a timed-out program would hang
 * the run. `ownFdsDir` is a parameter for the tests.
 */
export function checkPipePlatform(label: string, ownFdsDir = OWN_FDS_DIR): void {
  if (platformChecked && ownFdsDir === OWN_FDS_DIR) return;
  if (process.platform !== 'linux') {
    throw new ExecEngineError(`${label}: engine programs need Linux (named pipes that open without blocking, ${OWN_FDS_DIR}); this system is ${process.platform}`);
  }
  if (!existsSync(ownFdsDir)) {
    throw new ExecEngineError(`${label}: engine programs need ${ownFdsDir} (the timeout wakes a blocked read through it), which this system does not have`);
  }
  if (ownFdsDir === OWN_FDS_DIR) platformChecked = true;
}

/** A named pipe's reading and writing ends, both blocking; nothing left open on a failure. */
function openBothEnds(path: string): { reading: number; writing: number } {
  const keeper = openSync(path, constants.O_RDWR);
  let reading = -1;
  try {
    reading = openSync(path, constants.O_RDONLY);
    return { reading, writing: openSync(path, constants.O_WRONLY) };
  } catch (error) {
    closeQuietly(reading);
    throw error;
  } finally {
    closeSync(keeper);
  }
}

export function openProgramPipes(label: string): ProgramPipes {
  const dir = mkdtempSync(join(tmpdir(), 'jetlag-engine-'));
  let events: { reading: number; writing: number } | null = null;
  try {
    const eventsPath = join(dir, 'events');
    const answersPath = join(dir, 'answers');
    try {
      execFileSync('mkfifo', ['-m', '600', eventsPath, answersPath], { stdio: ['ignore', 'ignore', 'pipe'] });
    } catch (error) {
      throw new ExecEngineError(`${label}: cannot make the pipes to the program with mkfifo: ${(error as Error).message.split('\n')[0]}`);
    }
    try {
      events = openBothEnds(eventsPath);
      const answers = openBothEnds(answersPath);
      return { eventsOut: events.writing, childStdin: events.reading, answersIn: answers.reading, childStdout: answers.writing };
    } catch (error) {
      if (events !== null) {
        closeQuietly(events.reading);
        closeQuietly(events.writing);
      }
      throw new ExecEngineError(`${label}: cannot open the pipes to the program: ${(error as Error).message}`);
    }
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
