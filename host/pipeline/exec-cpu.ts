// `--program-cpu same`: a worker thread and its engine program held on one CPU, so that the
// two wake each other where they already run. On a virtual machine a wake-up onto another,
// idle CPU costs 50-150 µs, more than the rest of the pipe's round trip (README, "Timing your
// own program"). The worker thread holds itself with `taskset -pc CPU TID` right before it
// starts its program; the program, and every restart of it, inherits the thread's mask.
//
//   parseProgramCpu(text, commandName): ProgramCpu     UsageError on anything but same or any
//   programSeatsBuffer(): SharedArrayBuffer            one per run: the workers' seat table
//   takeProgramSeat(seats): number                     this worker's index: the lowest seat
//                                                      free, or whose thread is gone
//   holdThreadOnCpu(workerIndex, label): CpuHold       the calling thread on one CPU; one line
//                                                      (ExecEngineError) when that fails
//
// The CPU is the (workerIndex mod n)-th of the thread's allowed CPUs (n = their number, what
// os.availableParallelism() counts on Linux), not CPU workerIndex mod n: under a batch system
// the allowed CPUs need not start at 0. Linux only, as the pipes are (exec-fifo.ts).

import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, readlinkSync } from 'node:fs';
import { UsageError } from '../errors.js';
import { ExecEngineError } from './exec-error.js';

/** same: each worker thread and its program on one CPU; any: wherever the scheduler puts them */
export type ProgramCpu = 'same' | 'any';
export const PROGRAM_CPU_CHOICES: readonly ProgramCpu[] = ['same', 'any'];
export const DEFAULT_PROGRAM_CPU: ProgramCpu = 'any';

export function parseProgramCpu(text: string | undefined, commandName: string): ProgramCpu {
  if (text === undefined) return DEFAULT_PROGRAM_CPU;
  if (PROGRAM_CPU_CHOICES.includes(text as ProgramCpu)) return text as ProgramCpu;
  throw new UsageError(`${commandName}: --program-cpu must be ${PROGRAM_CPU_CHOICES.join(' or ')}, got ${JSON.stringify(text)}`);
}

/** seats in a run's table; a worker beyond them (never with --workers up to the table) counts on past it */
export const PROGRAM_SEATS = 1024;
/** Int32 layout: [0, PROGRAM_SEATS) each seat's holder, a Linux thread id (0: free); then the count of seats taken past the table */
const OVERFLOW_WORD = PROGRAM_SEATS;

export function programSeatsBuffer(): SharedArrayBuffer {
  return new SharedArrayBuffer((PROGRAM_SEATS + 1) * Int32Array.BYTES_PER_ELEMENT);
}

/** the calling thread's Linux thread id (/proc/thread-self -> "PID/task/TID"); 0 when /proc cannot say */
function ownThreadId(): number {
  try {
    return Number(readlinkSync('/proc/thread-self').split('/').pop());
  } catch {
    return 0;
  }
}

/**
 * A piscina batch does not say which worker runs it, so each worker takes a seat when it
 * starts its program; the open loop's ServeTask.workerIndex comes after the warm-up has
 * already started the program, too late to hold it. A seat is the lowest one free or held by a
 * thread that is gone (/proc/self/task has no entry for it), so a thread that replaces a dead
 * worker gets the dead one's CPU rather than doubling up on a live worker's; a thread that
 * asks again keeps its seat.
 */
export function takeProgramSeat(seats: SharedArrayBuffer, threadId = ownThreadId()): number {
  const holders = new Int32Array(seats);
  for (let seat = 0; seat < PROGRAM_SEATS; seat++) if (threadId !== 0 && Atomics.load(holders, seat) === threadId) return seat;
  for (let seat = 0; seat < PROGRAM_SEATS; seat++) {
    const holder = Atomics.load(holders, seat);
    if (holder !== 0 && existsSync(`/proc/self/task/${holder}`)) continue;
    // another thread may take the same seat at the same moment: only one exchange succeeds
    if (Atomics.compareExchange(holders, seat, holder, threadId) === holder) return seat;
  }
  return PROGRAM_SEATS + Atomics.add(holders, OVERFLOW_WORD, 1);
}

export interface CpuHold {
  /** the CPU the thread (and what it starts from now on) is held on */
  cpu: number;
  /** the thread's CPUs before, e.g. 0-1 */
  allowedBefore: string;
  /** puts the thread's former CPUs back (the `cluster` command holds the main thread) */
  release(): void;
}

/** "0-2,5" -> [0, 1, 2, 5] */
export function cpusOfList(list: string): number[] {
  const cpus: number[] = [];
  for (const part of list.trim().split(',')) {
    if (part === '') continue;
    const [from, to] = part.split('-').map(Number);
    for (let cpu = from; cpu <= (to ?? from); cpu++) cpus.push(cpu);
  }
  return cpus;
}

function runTaskset(cpuList: string, threadId: string, label: string, what: string): void {
  try {
    execFileSync('taskset', ['-pc', cpuList, threadId], { stdio: ['ignore', 'ignore', 'pipe'] });
  } catch (error) {
    const stderr = (error as { stderr?: Buffer }).stderr?.toString().trim().split('\n')[0];
    throw new ExecEngineError(`${label}: --program-cpu same: cannot ${what} with taskset -pc ${cpuList} ${threadId} (util-linux): ${stderr || (error as Error).message.split('\n')[0]}`);
  }
}

export function holdThreadOnCpu(workerIndex: number, label: string): CpuHold {
  const threadId = String(ownThreadId());
  let allowedBefore: string;
  try {
    if (threadId === '0') throw new Error('no /proc/thread-self');
    const status = readFileSync('/proc/thread-self/status', 'utf8');
    allowedBefore = /^Cpus_allowed_list:\s*(\S+)/m.exec(status)![1];
  } catch (error) {
    throw new ExecEngineError(`${label}: --program-cpu same: cannot read this thread's CPUs from /proc/thread-self (Linux only): ${(error as Error).message}`);
  }
  const allowed = cpusOfList(allowedBefore);
  const cpu = allowed[workerIndex % allowed.length];
  runTaskset(String(cpu), threadId, label, `hold worker ${workerIndex} on CPU ${cpu}`);
  return { cpu, allowedBefore, release: () => runTaskset(allowedBefore, threadId, label, `give worker ${workerIndex} back its CPUs`) };
}
