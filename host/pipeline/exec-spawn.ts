// Starting and killing an engine program (exec-process.ts runs it): its stdin and stdout on
// blocking named pipes (exec-fifo.ts), its stderr into a file (exec-stderr.ts), in a process
// group of its own, so that a kill reaches the children it starts too (a child left holding
// stdin or stdout would keep a blocking write or read of jetlag waiting).
//
//   spawnProgram(argv, env, label): SpawnedProgram   nothing is left open when it throws
//   killProgramGroup(pid)                            SIGKILL to the whole group

import { spawn, type ChildProcess } from 'node:child_process';
import { closeChildEnds, closeJetlagEnds, openProgramPipes, type ProgramPipes } from './exec-fifo.js';
import { StderrFile } from './exec-stderr.js';

export interface SpawnedProgram {
  child: ChildProcess;
  /** jetlag's ends only: the program's are closed in jetlag once it has them */
  pipes: ProgramPipes;
  stderr: StderrFile;
}

export function spawnProgram(argv: string[], env: Record<string, string> | undefined, label: string): SpawnedProgram {
  const stderr = new StderrFile();
  let pipes: ProgramPipes;
  try {
    pipes = openProgramPipes(label);
  } catch (error) {
    stderr.close();
    throw error;
  }
  try {
    const child = spawn(argv[0], argv.slice(1), {
      stdio: [pipes.childStdin, pipes.childStdout, stderr.fd],
      env: env ? { ...process.env, ...env } : process.env,
      // its own process group (its pid is the group's id): killProgramGroup reaches its children
      detached: true,
    });
    return { child, pipes, stderr };
  } catch (error) {
    closeJetlagEnds(pipes);
    stderr.close();
    throw error;
  } finally {
    closeChildEnds(pipes);
  }
}

/** SIGKILL to the program's process group; a group already gone is fine. */
export function killProgramGroup(pid: number): void {
  try {
    process.kill(-pid, 'SIGKILL');
  } catch {
    // no process left in the group
  }
}
