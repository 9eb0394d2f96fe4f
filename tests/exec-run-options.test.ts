// `run --engine exec:…` on the command line: the program's words and options parsed on the
// main thread, and usage errors before any worker or program starts.

import { describe, expect, it } from 'vitest';
import { parseArgs } from '../host/cli/args.js';
import { runOptionsFrom, spec as runSpec } from '../host/cli/commands/run.js';
import { UsageError } from '../host/errors.js';
import { DEFAULT_TOLERANCE } from '../host/validate/tolerance-compare.js';

const options = (argv: string[]) => runOptionsFrom(parseArgs(runSpec, ['events.jetlag', ...argv]));

describe('run --engine exec:', () => {
  it('splits the command and takes the timeout from the budget when not given', () => {
    const program = options(['--engine', "exec:./my-clusterer --fast 'a b'", '--budget-us', '200']).program!;
    expect(program.argv).toEqual(['./my-clusterer', '--fast', 'a b']);
    // 100 budgets of 200 µs
    expect(program.timeoutMs).toBe(20);
    expect(program.tolerance).toBeNull();
  });

  it('takes --tolerance with --ptmin as the jets that must agree', () => {
    const program = options(['--engine', 'exec:./c', '--tolerance', '--pt-tol', '0.01', '--ptmin', '5']).program!;
    expect(program.tolerance).toEqual({ ...DEFAULT_TOLERANCE, ptTol: 0.01, ptMin: 5 });
  });

  it('refuses the program options without exec:', () => {
    expect(() => options(['--tolerance'])).toThrow(UsageError);
    expect(() => options(['--engine', 'wasm', '--engine-restarts', '2'])).toThrow(/apply to --engine exec: only/);
  });

  it('refuses a shell feature in the command', () => {
    expect(() => options(['--engine', 'exec:./c | tee log'])).toThrow(/shell feature/);
  });
});
