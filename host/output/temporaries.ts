// Temporary output files (`.NAME.PID.XXXXXX.tmp` beside the target) that must not outlive the
// process: a run stopped by SIGINT, SIGTERM or SIGHUP, or ended by process.exit(), removes
// them before it goes.
//
// API
//   holdTemporary(path)     the file exists now and is ours until released
//   releaseTemporary(path)  renamed into place or removed: no longer ours to clean up
//   heldTemporaries()       the paths held now (tests)
//
// Why the signal handlers step aside: a command with a SIGINT handler of its own (`run`
// finishes the batches in flight and renames its outputs into place) decides what a signal
// means, so these handlers only act when they are the only listener of that signal; then they
// remove the temporaries and raise the signal again with the default action, so the process
// ends the way a signal ends it (exit status 128 + signal number seen by the shell). A
// process.exit() (e.g. `run`'s second Ctrl-C) passes through the 'exit' hook, which removes
// whatever is still held. Cleanup is synchronous: nothing asynchronous runs after 'exit'.

import { unlinkSync } from 'node:fs';

const held = new Set<string>();
const SIGNALS: NodeJS.Signals[] = ['SIGINT', 'SIGTERM', 'SIGHUP'];
let installed = false;

function removeAll(): void {
  for (const path of held) {
    try { unlinkSync(path); } catch { /* already gone */ }
  }
  held.clear();
}

function onSignal(signal: NodeJS.Signals): void {
  if (process.listenerCount(signal) > 1) return; // someone else handles it (see above)
  removeAll();
  for (const name of SIGNALS) process.off(name, onSignal);
  process.kill(process.pid, signal);
}

function install(): void {
  if (installed) return;
  installed = true;
  for (const name of SIGNALS) process.on(name, onSignal);
  process.on('exit', removeAll);
}

export function holdTemporary(path: string): void {
  install();
  held.add(path);
}

export function releaseTemporary(path: string): void {
  held.delete(path);
}

export function heldTemporaries(): string[] {
  return [...held];
}
