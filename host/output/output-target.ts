// What an output path names, decided before anything is written to it.
//
// API
//   examineOutput(path, { force? }): Promise<OutputTarget>
//     { kind: 'new' }                 nothing there: write a temporary, link it into place
//     { kind: 'replace' }             a regular file there and force given: temporary, rename
//     { kind: 'direct', handle }      a character device (/dev/null) or a pipe (FIFO): written
//                                     straight through the handle, never replaced
//     throws OutputError: a regular file there without force, a directory, a block device or
//     a socket, a missing directory, no permission
//   checkOutputAllowed(path, { force? }): Promise<void>
//                                     the same refusals, without opening anything: for an
//                                     output written only at the end of a long run
//   cannotWrite(path, error): OutputError   one line from a system error
//
// Why devices and pipes are opened at once and checked through the handle: between a stat()
// and an open() the path could become something else; what is checked is what was opened.
// Opening a FIFO for writing waits for its reader, as every program writing to a pipe does.
// A block device is refused: writing a disk image over a disk is never what a flag was for.

import { constants } from 'node:fs';
import { open, stat, type FileHandle } from 'node:fs/promises';
import { OutputError } from '../errors.js';

export type OutputTarget =
  | { kind: 'new' }
  | { kind: 'replace' }
  | { kind: 'direct'; handle: FileHandle };

export interface ExamineOptions {
  /** replace an existing regular file */
  force?: boolean;
}

/** One line naming the output that cannot be written; keeps the system's error code. */
export function cannotWrite(path: string, error: NodeJS.ErrnoException): OutputError {
  const reason = error.code === 'ENOENT' ? 'no such directory'
    : error.code === 'ENOTDIR' ? 'a folder on its path is not a directory'
    : error.code === 'EISDIR' ? 'it is a directory'
    : error.code === 'EACCES' || error.code === 'EPERM' ? 'permission denied'
    : error.code === 'EROFS' ? 'read-only file system'
    : error.code === 'ENOSPC' ? 'no space left on the device'
    : error.message;
  return new OutputError(path, error.code && reason !== error.message ? `${reason} (${error.code})` : reason, error.code);
}

function kindOfNode(stats: { isDirectory(): boolean; isBlockDevice(): boolean; isSocket(): boolean }): string | null {
  if (stats.isDirectory()) return 'it is a directory';
  if (stats.isBlockDevice()) return 'it is a block device; outputs are regular files, character devices or pipes';
  if (stats.isSocket()) return 'it is a socket; outputs are regular files, character devices or pipes';
  return null;
}

export async function checkOutputAllowed(path: string, options: ExamineOptions = {}): Promise<void> {
  if (path === '-') return;
  let stats;
  try {
    stats = await stat(path);
  } catch (error) {
    const e = error as NodeJS.ErrnoException;
    if (e.code === 'ENOENT') return;
    throw cannotWrite(path, e);
  }
  if (stats.isFile() && !options.force) throw new OutputError(path, 'the file exists (give --force to replace it)', 'EEXIST');
  const refused = kindOfNode(stats);
  if (refused) throw new OutputError(path, refused);
}

export async function examineOutput(path: string, options: ExamineOptions = {}): Promise<OutputTarget> {
  let stats;
  try {
    stats = await stat(path);
  } catch (error) {
    const e = error as NodeJS.ErrnoException;
    if (e.code === 'ENOENT') return { kind: 'new' }; // a missing directory shows when the temporary is made
    throw cannotWrite(path, e);
  }
  if (stats.isFile()) {
    if (!options.force) throw new OutputError(path, 'the file exists (give --force to replace it)', 'EEXIST');
    return { kind: 'replace' };
  }
  const refused = kindOfNode(stats);
  if (refused) throw new OutputError(path, refused);
  // a character device or a FIFO: open without creating or truncating, then look again
  let handle: FileHandle;
  try {
    handle = await open(path, constants.O_WRONLY | constants.O_NOCTTY);
  } catch (error) {
    throw cannotWrite(path, error as NodeJS.ErrnoException);
  }
  const opened = await handle.stat();
  if (opened.isCharacterDevice() || opened.isFIFO()) return { kind: 'direct', handle };
  await handle.close();
  // it changed between the two looks: decide again on what is there now
  return examineOutput(path, options);
}
