// The command-line parser on its own: a made-up command table fed argument lists.

import { describe, expect, it } from 'vitest';
import { formatHelp, parseArgs, type CommandSpec } from '../host/cli/args.js';
import { UsageError } from '../host/errors.js';

const spec: CommandSpec = {
  name: 'try',
  summary: 'a command for the parser tests',
  usage: 'jetlag try <input> [options]',
  positionals: { min: 1, max: 1 },
  options: [
    { name: 'quiet', kind: 'flag', short: 'q', description: 'say less' },
    { name: 'json', kind: 'string', argument: '<file>', description: 'write a report here' },
    { name: 'workers', kind: 'integer', argument: '<n>', description: 'threads (default: 2)' },
    { name: 'p', kind: 'number', argument: '<exponent>', description: 'an exponent (default: -1)' },
  ],
};

const parse = (...argv: string[]) => parseArgs(spec, argv);

/** the UsageError message of a refused argument list */
function refusal(...argv: string[]): string {
  try {
    parse(...argv);
  } catch (error) {
    expect(error).toBeInstanceOf(UsageError);
    return (error as Error).message;
  }
  throw new Error(`accepted ${argv.join(' ')}`);
}

describe('option names', () => {
  it('read a long name after two dashes', () => {
    expect(parse('in', '--quiet').values.quiet).toBe(true);
  });

  it('read a short name after one dash', () => {
    expect(parse('in', '-q').values.quiet).toBe(true);
  });

  it('refuse a short name after two dashes', () => {
    expect(refusal('in', '--q')).toContain('unknown option --q');
  });

  it('refuse a long name after one dash', () => {
    expect(refusal('in', '-quiet')).toContain('unknown option -quiet');
  });

  it('refuse a value given to a flag', () => {
    expect(refusal('in', '--quiet=yes')).toContain('takes no value');
  });
});

describe('integer values', () => {
  it('read plain decimal digits', () => {
    expect(parse('in', '--workers', '16').values.workers).toBe(16);
  });

  it('refuse hexadecimal', () => {
    expect(refusal('in', '--workers', '0x10')).toContain('--workers');
  });

  it('refuse exponent notation', () => {
    expect(refusal('in', '--workers', '1e3')).toContain('--workers');
  });

  it('refuse a fraction', () => {
    expect(refusal('in', '--workers', '2.5')).toContain('--workers');
  });

  it('refuse spaces around the digits', () => {
    expect(refusal('in', '--workers', ' 4')).toContain('--workers');
  });
});

describe('number values', () => {
  it('read a negative number given as the next argument', () => {
    expect(parse('in', '--p', '-1').values.p).toBe(-1);
  });

  it('read exponent notation', () => {
    expect(parse('in', '--p', '-2.5e-3').values.p).toBe(-2.5e-3);
  });

  it('refuse hexadecimal', () => {
    expect(refusal('in', '--p', '0x10')).toContain('--p must be a number');
  });

  it('refuse Infinity', () => {
    expect(refusal('in', '--p', 'Infinity')).toContain('--p must be a number');
  });
});

describe('values that look like options', () => {
  it('refuse a known long option as the value, in one line naming both', () => {
    const message = refusal('in', '--json', '--quiet');
    expect(message).toContain('--json needs a value <file>, got the option --quiet');
    expect(message).not.toContain('\n');
  });

  it('refuse a known short option as the value', () => {
    expect(refusal('in', '--json', '-q')).toContain('got the option -q');
  });

  it('refuse --help as the value', () => {
    expect(refusal('in', '--json', '--help')).toContain('got the option --help');
  });

  it('take such a value when it is given with =', () => {
    expect(parse('in', '--json=--quiet').values.json).toBe('--quiet');
  });

  it('take a lone dash (standard output) as the value', () => {
    expect(parse('in', '--json', '-').values.json).toBe('-');
  });
});

describe('arguments', () => {
  it('refuse a value missing at the end', () => {
    expect(refusal('in', '--json')).toContain('--json needs a value <file>');
  });

  it('take everything after -- as positionals', () => {
    expect(parse('--', '-q').positionals).toEqual(['-q']);
  });

  it('refuse too few positionals', () => {
    expect(refusal('--quiet')).toContain('missing argument');
  });

  it('refuse too many positionals', () => {
    expect(refusal('in', 'out')).toContain('unexpected argument out');
  });

  it('skip the positional count when help is asked for', () => {
    expect(parse('-h').help).toBe(true);
  });
});

describe('the help text', () => {
  it('lists each option once, with its short name and argument', () => {
    const help = formatHelp(spec);
    expect(help).toContain('--quiet, -q');
    expect(help).toContain('--json <file>');
    expect(help.split('--workers').length).toBe(2);
  });
});
