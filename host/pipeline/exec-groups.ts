// Engine programs still running when jetlag ends are killed with it. Each program runs in a
// process group of its own (exec-spawn.ts), so a terminal's Ctrl-C does not reach it and a
// program hung outside its reads would outlive jetlag. Every thread that starts programs notes
// their group ids in one table of shared memory; the main thread, on its way out (a normal end,
// or process.exit(): `run`'s second Ctrl-C), kills the groups left in it. (A signal that ends
// jetlag by its default action runs no hook: the groups are then left to the sender.) Worker threads are stopped without running their own exit hooks, so
// the table is the main thread's.
//
//   programGroupsBuffer()        main thread: the table, made once, its exit hook installed
//   useProgramGroups(buffer)     a worker thread: note its programs in the main thread's table
//   noteProgramGroup(pid)        a program started (its pid is its group's id)
//   forgetProgramGroup(pid)      it ended

import { isMainThread } from 'node:worker_threads';

/** programs running at once, at most, that the table can note (one per worker) */
const GROUPS_MAX = 1024;

let table: Int32Array | null = null;

function killNoted(): void {
  if (table === null) return;
  for (let slot = 0; slot < GROUPS_MAX; slot++) {
    const pid = Atomics.exchange(table, slot, 0);
    if (pid <= 0) continue;
    try {
      process.kill(-pid, 'SIGKILL');
    } catch {
      // the group is gone already
    }
  }
}

/** The main thread's table (made and hooked to the process's exit once); to hand to workers. */
export function programGroupsBuffer(): SharedArrayBuffer {
  if (table === null) {
    table = new Int32Array(new SharedArrayBuffer(4 * GROUPS_MAX));
    if (isMainThread) process.on('exit', killNoted);
  }
  return table.buffer as SharedArrayBuffer;
}

/** A worker thread notes its programs in the main thread's table. */
export function useProgramGroups(buffer: SharedArrayBuffer): void {
  table = new Int32Array(buffer);
}

export function noteProgramGroup(pid: number): void {
  if (table === null) programGroupsBuffer();
  for (let slot = 0; slot < GROUPS_MAX; slot++) {
    if (Atomics.compareExchange(table!, slot, 0, pid) === 0) return;
  }
  // a full table: the program is killed at its own end as before, only not at jetlag's
}

export function forgetProgramGroup(pid: number): void {
  if (table === null) return;
  for (let slot = 0; slot < GROUPS_MAX; slot++) {
    if (Atomics.compareExchange(table, slot, pid, 0) === pid) return;
  }
}
