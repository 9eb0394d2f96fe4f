// `jetlag compare -  -`: stdin can feed only one of the two inputs, so naming it for both is
// bad usage, said in one line, before anything is read.

import { describe, expect, it } from 'vitest';
import { UsageError } from '../host/errors.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { fakeIo } from './support/command-io.js';

describe('compare with stdin', () => {
  it('refuses stdin for both the events and the candidate as bad usage', async () => {
    const { io } = fakeIo({ stdin: 'event,ieta,iphi,et\n0,1,1,5\n' });
    await expect(compareMain(['-', '-'], io)).rejects.toThrow(UsageError);
  });
});
