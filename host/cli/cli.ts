#!/usr/bin/env node
// The jetlag command line: a table of commands, each in its own module under commands/,
// loaded only when used so that `jetlag --help` stays cheap.
//   exit codes: 0 success, 1 a check failed, 2 bad usage or unreadable input

import { pathToFileURL } from 'node:url';
import { realpathSync } from 'node:fs';
import { formatHelp, parseArgs, type CommandIo, type CommandMain, type CommandSpec } from './args.js';
import { InputError, OutputError, UsageError } from '../errors.js';
import { ExecEngineError } from '../pipeline/exec-error.js';
import { VERSION } from '../version.js';

interface CommandEntry {
  summary: string;
}

/** each command lives in commands/<name>.js and exports its option table and main */
async function loadCommand(name: string): Promise<{ spec: CommandSpec; main: CommandMain }> {
  return import(`./commands/${name}.js`);
}

const COMMANDS: Record<string, CommandEntry> = {
  demo: { summary: 'generate a demo event file and run the main job on it' },
  run: { summary: 'stream an event file through the worker pool and report latency' },
  cluster: { summary: 'cluster every event of a file and write the jets' },
  compare: { summary: 'check an outside implementation\'s jets against the reference' },
  generate: { summary: 'write a file of invented demo events (toy generator)' },
  import: { summary: 'turn a CSV tower file into an event file' },
  export: { summary: 'write an event or jets file as CSV or JSON lines' },
  merge: { summary: 'add up the summaries of sharded runs exactly' },
  index: { summary: 'write the record index of an event file, so shards read only their part' },
  report: { summary: 'write a self-contained HTML report from run and compare summaries' },
};

function topHelp(): string {
  const width = Math.max(...Object.keys(COMMANDS).map((n) => n.length)) + 2;
  const lines = [
    'jetlag: does jet clustering fit the trigger\'s latency budget, and does every fast rewrite give the reference\'s jets?',
    '',
    'usage: jetlag <command> [options]      jetlag <command> --help',
    '',
    'commands:',
    ...Object.entries(COMMANDS).map(([name, entry]) => `  ${name.padEnd(width)}${entry.summary}`),
    '',
    'exit codes: 0 success, 1 a check failed, 2 bad usage or unreadable input',
  ];
  return lines.join('\n') + '\n';
}

/** Runs one command line; returns the exit code. Errors are written as one line to stderr. */
export async function runCli(argv: string[], io: CommandIo): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    io.stdout.write(topHelp());
    return name === undefined ? 2 : 0;
  }
  if (name === '--version') {
    io.stdout.write(`jetlag ${VERSION}\n`);
    return 0;
  }
  const entry = COMMANDS[name];
  if (!entry) {
    io.stderr.write(`jetlag: unknown command ${JSON.stringify(name)} (see jetlag --help)\n`);
    return 2;
  }
  try {
    const command = await loadCommand(name);
    if (rest.includes('--help') || rest.includes('-h')) {
      parseArgs(command.spec, rest); // still reject unknown options
      io.stdout.write(formatHelp(command.spec));
      return 0;
    }
    return await command.main(rest, io);
  } catch (error) {
    return reportError(error, io, name);
  }
}

/**
 * One line on stderr for an error that ended a command, `jetlag COMMAND: ...`; returns the
 * exit code. Usage errors already start with the command's name.
 */
export function reportError(error: unknown, io: CommandIo, command?: string): number {
  const lead = command === undefined ? 'jetlag:' : `jetlag ${command}:`;
  const oneLine = (text: string) => text.split(/\r?\n/).join(' | ');
  if (error instanceof UsageError) {
    const named = command !== undefined && !error.message.startsWith(`${command}:`) ? `${command}: ${error.message}` : error.message;
    io.stderr.write(`jetlag ${oneLine(named)}\n`);
    return 2;
  }
  // ExecEngineError: an engine program that cannot be run, named in its one line
  if (error instanceof InputError || error instanceof OutputError || error instanceof ExecEngineError) {
    io.stderr.write(`${lead} ${oneLine(error.message)}\n`);
    return 2;
  }
  const code = (error as NodeJS.ErrnoException)?.code;
  if (code === 'ENOENT' || code === 'EACCES' || code === 'EISDIR') {
    io.stderr.write(`${lead} ${oneLine((error as Error).message)}\n`);
    return 2;
  }
  if (code === 'EPIPE') return 0; // a closed stdout (e.g. `| head`) is not a failure of ours
  const detail = process.env.JETLAG_DEBUG ? (error as Error)?.stack : (error as Error)?.message;
  io.stderr.write(`${lead} internal error: ${oneLine(String(detail ?? error))}\n`);
  return 2;
}

const invokedDirectly = (() => {
  try {
    return import.meta.url === pathToFileURL(realpathSync(process.argv[1] ?? '')).href;
  } catch {
    return false;
  }
})();

if (invokedDirectly) {
  process.stdout.on('error', (error: NodeJS.ErrnoException) => {
    if (error.code === 'EPIPE') process.exit(process.exitCode ?? 0);
  });
  const code = await runCli(process.argv.slice(2), {
    stdout: process.stdout,
    stderr: process.stderr,
    stdin: process.stdin,
    isTty: Boolean(process.stdout.isTTY),
  });
  process.exitCode = code;
}
