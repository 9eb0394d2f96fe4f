// `jetlag compare -  -`: stdin can feed only one of the two inputs, so naming it for both is
// bad usage, said in one line, before anything is read.

import { PassThrough } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { type CommandIo } from '../host/cli/args.js';
import { UsageError } from '../host/errors.js';
import { main as compareMain } from '../host/cli/commands/compare.js';

describe('compare with stdin', () => {
  it('refuses stdin for both the events and the candidate as bad usage', async () => {
    const stdin = new PassThrough();
    stdin.end('event,ieta,iphi,et\n0,1,1,5\n');
    const sink = () => { const s = new PassThrough(); s.resume(); return s; };
    const io: CommandIo = { stdout: sink(), stderr: sink(), stdin, isTty: false };
    await expect(compareMain(['-', '-'], io)).rejects.toThrow(UsageError);
  });
});
