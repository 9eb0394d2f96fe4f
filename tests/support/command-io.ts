// The standard streams a command sees (host/cli/args.ts CommandIo), faked for in-process
// command tests: stdin holds a given text and is already ended, stdout and stderr are captured.

import { PassThrough } from 'node:stream';
import type { CommandIo } from '../../host/cli/args.js';

export interface FakeIo {
  io: CommandIo;
  stdoutBytes(): Buffer;
  stdout(): string;
  stderr(): string;
}

export function fakeIo(options: { stdin?: string; isTty?: boolean } = {}): FakeIo {
  const stdout = new PassThrough();
  const stderr = new PassThrough();
  const out: Buffer[] = [];
  const err: Buffer[] = [];
  stdout.on('data', (chunk: Buffer) => out.push(chunk));
  stderr.on('data', (chunk: Buffer) => err.push(chunk));
  const stdin = new PassThrough();
  stdin.end(options.stdin ?? '');
  return {
    io: { stdout, stderr, stdin, isTty: options.isTty ?? false },
    stdoutBytes: () => Buffer.concat(out),
    stdout: () => Buffer.concat(out).toString('utf8'),
    stderr: () => Buffer.concat(err).toString('utf8'),
  };
}
