// A small declarative command-line parser: each command lists its options once in a table,
// the same table prints --help, and parsing is a pure function that tests can feed strings.

import { UsageError } from '../errors.js';

export type OptionKind = 'string' | 'number' | 'integer' | 'flag';

export interface OptionSpec {
  name: string; // long name without the dashes
  kind: OptionKind;
  description: string; // ends with "(default: ...)" where a default exists
  argument?: string; // e.g. '<file>'
  short?: string;
}

export interface CommandSpec {
  name: string;
  summary: string;
  usage: string; // e.g. 'jetlag cluster <events> [options]'
  positionals: { min: number; max: number };
  options: OptionSpec[];
}

export interface ParsedArgs {
  positionals: string[];
  values: Record<string, string | number | boolean | undefined>;
  help: boolean;
}

// Long names take two dashes and short names one (`--q` and `-quiet` are unknown options), so a
// typo is refused instead of being read as another option. An option that takes a value takes
// the next argument unless that argument is itself one of the command's options: `--json --quiet`
// means a forgotten file name, not a file called "--quiet". A negative number (`--p -1`) is no
// option name, so it still passes as a value; `--json=--quiet` says the odd name on purpose.
export function parseArgs(spec: CommandSpec, argv: readonly string[]): ParsedArgs {
  const values: ParsedArgs['values'] = {};
  const positionals: string[] = [];
  let help = false;
  const longNames = new Map<string, OptionSpec>();
  const shortNames = new Map<string, OptionSpec>();
  for (const option of spec.options) {
    longNames.set(option.name, option);
    if (option.short) shortNames.set(option.short, option);
  }
  const optionNamed = (arg: string): OptionSpec | undefined => {
    const isLong = arg.startsWith('--');
    const body = arg.slice(isLong ? 2 : 1);
    const eq = body.indexOf('=');
    return (isLong ? longNames : shortNames).get(eq >= 0 ? body.slice(0, eq) : body);
  };
  const isKnownOption = (arg: string): boolean =>
    arg === '--help' || arg === '-h' || (arg.startsWith('-') && arg !== '-' && optionNamed(arg) !== undefined);
  for (let k = 0; k < argv.length; k++) {
    const arg = argv[k];
    if (arg === '--help' || arg === '-h') { help = true; continue; }
    if (arg === '--') { positionals.push(...argv.slice(k + 1)); break; }
    if (arg.startsWith('-') && arg !== '-') {
      const body = arg.slice(arg.startsWith('--') ? 2 : 1);
      const eq = body.indexOf('=');
      const option = optionNamed(arg);
      if (!option) throw new UsageError(`${spec.name}: unknown option ${arg} (see jetlag ${spec.name} --help)`);
      if (option.kind === 'flag') {
        if (eq >= 0) throw new UsageError(`${spec.name}: --${option.name} takes no value`);
        values[option.name] = true;
        continue;
      }
      let text: string;
      if (eq >= 0) text = body.slice(eq + 1);
      else {
        if (k + 1 >= argv.length) throw new UsageError(`${spec.name}: --${option.name} needs a value ${option.argument ?? ''}`.trimEnd());
        text = argv[++k];
        if (isKnownOption(text)) {
          const wanted = option.argument ? ` ${option.argument}` : '';
          throw new UsageError(`${spec.name}: --${option.name} needs a value${wanted}, got the option ${text} (write --${option.name}=${text} if that is the value)`);
        }
      }
      values[option.name] = convert(spec.name, option, text);
      continue;
    }
    positionals.push(arg);
  }
  if (!help) {
    if (positionals.length < spec.positionals.min) {
      throw new UsageError(`${spec.name}: missing argument (usage: ${spec.usage})`);
    }
    if (positionals.length > spec.positionals.max) {
      throw new UsageError(`${spec.name}: unexpected argument ${positionals[spec.positionals.max]} (usage: ${spec.usage})`);
    }
  }
  return { positionals, values, help };
}

/** plain decimal only: no hex, binary or octal prefixes, no spaces, no "Infinity" */
const INTEGER_TEXT = /^[+-]?\d+$/;
const NUMBER_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;

function convert(command: string, option: OptionSpec, text: string): string | number {
  if (option.kind === 'string') return text;
  const value = Number(text);
  if (option.kind === 'integer') {
    if (!INTEGER_TEXT.test(text) || !Number.isFinite(value)) {
      throw new UsageError(`${command}: --${option.name} must be a decimal integer, got ${JSON.stringify(text)}`);
    }
    return value;
  }
  if (!NUMBER_TEXT.test(text) || !Number.isFinite(value)) {
    throw new UsageError(`${command}: --${option.name} must be a number, got ${JSON.stringify(text)}`);
  }
  return value;
}

export function formatHelp(spec: CommandSpec): string {
  const lines = [`${spec.summary}`, '', `usage: ${spec.usage}`, '', 'options:'];
  const left = spec.options.map((o) => `  --${o.name}${o.short ? `, -${o.short}` : ''}${o.argument ? ` ${o.argument}` : ''}`);
  left.push('  --help, -h');
  const width = Math.max(...left.map((l) => l.length)) + 2;
  spec.options.forEach((o, k) => lines.push(left[k].padEnd(width) + o.description));
  lines.push(left[left.length - 1].padEnd(width) + 'print this help');
  lines.push('', 'exit codes: 0 success, 1 a check failed, 2 bad usage or unreadable input');
  return lines.join('\n') + '\n';
}

/** Standard streams of a command, so tests can run commands in-process. */
export interface CommandIo {
  stdout: NodeJS.WritableStream;
  stderr: NodeJS.WritableStream;
  stdin: NodeJS.ReadableStream;
  isTty: boolean;
}

export type CommandMain = (argv: string[], io: CommandIo) => Promise<number>;
