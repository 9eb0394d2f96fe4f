// The fuzz campaign through the commands as processes: mutated inputs (mutate.ts, from the
// valid inputs of campaign.ts) given to `run`, `cluster`, `compare`, `merge` and `export` as
// child processes of the built command line (dist/host/cli/cli.js), each with a time bound.
// A process ends accepted (exit 0, or 1: a check failed, as a compare of a changed candidate
// should), rejected (exit 2, grouped by what its last stderr line says is wrong) or crashed:
// a stack trace on stderr, an exit code other than 0, 1 and 2, a signal, or the time bound.
// Rejections with a stderr line not led by `jetlag COMMAND:`, or that name the mutated input
// but no byte, are listed apart.
//
// API
//   runProcessCampaign({ seed, count, first?, concurrency?, boundMs?, cli?, onCase? }): Promise<ProcessTally>
//     case k uses seed and k only: a finding is reproduced by its seed and case number, and
//     runs of cases [first, first + count) add up to one run over all of them
//   formatProcessTally(tally): string        the table `npm run fuzz -- --processes N` prints

import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { makeRandom, mix32 } from '../../host/random.js';
import { kindOf, makeSeeds } from './campaign.js';
import { mutate } from './mutate.js';

/** the valid files a case's command line may name beside its mutated input */
interface ValidFiles { events: string; jets: string; summary: string }

interface Target {
  /** which valid input (campaign.ts makeSeeds name) is mutated */
  input: string;
  command: string;
  args: (mutated: string, valid: ValidFiles, out: string) => string[];
}

const EVENT_INPUTS = ['event file', 'event file, gzip', 'event file, raw deposits', 'CSV towers', 'CSV towers, stated grid'];

const TARGETS: Target[] = [
  ...EVENT_INPUTS.flatMap((input): Target[] => [
    { input, command: 'run', args: (m, _v, out) => ['run', m, '--workers', '1', '--check', 'all', '--json', out, '-q'] },
    { input, command: 'run', args: (m, _v, out) => ['run', m, '--workers', '1', '--rate', '2000', '--check', 'none', '--json', out, '-q'] },
    { input, command: 'cluster', args: (m, _v, out) => ['cluster', m, '--out', out, '-q'] },
    { input, command: 'cluster', args: (m, _v, out) => ['cluster', m, '--engine', 'reference', '--format', 'jsonl', '--out', out, '-q'] },
    { input, command: 'export', args: (m, _v, out) => ['export', m, '--format', 'csv', '--out', out, '-q'] },
    { input, command: 'compare', args: (m, v) => ['compare', m, v.jets, '-q'] },
  ]),
  { input: 'jets file', command: 'export', args: (m, _v, out) => ['export', m, '--format', 'csv', '--out', out, '-q'] },
  { input: 'jets file', command: 'export', args: (m, _v, out) => ['export', m, '--format', 'jsonl', '--out', out, '-q'] },
  ...['candidate jets file', 'candidate JSON lines', 'candidate CSV'].map((input): Target => (
    { input, command: 'compare', args: (m, v) => ['compare', v.events, m, '-q'] })),
  { input: 'run summary', command: 'merge', args: (m) => ['merge', m, '-q'] },
  { input: 'run summary', command: 'merge', args: (m, v, out) => ['merge', m, v.summary, '--json', out, '-q'] },
];

export type ProcessFindingKind = 'stack trace' | 'exit code' | 'signal' | 'timeout';

export interface ProcessFinding {
  kind: ProcessFindingKind;
  seed: number;
  caseNumber: number;
  commandLine: string;
  how: string;
  detail: string;
}

export interface ProcessTally {
  cases: number;
  /** exit 0 */
  accepted: number;
  /** exit 1: read, and a check failed */
  checkFailed: number;
  /** exit 2, by what was wrong */
  rejected: Map<string, number>;
  /** rejections with a stderr line not led by `jetlag COMMAND:`, or naming the input but no byte: kind -> count and one stderr */
  roughRejections: Map<string, { count: number; example: string }>;
  byCommand: Map<string, number>;
  findings: ProcessFinding[];
  slowestMs: number;
}

export interface ProcessCampaignOptions {
  seed: number;
  count: number;
  /** the first case number (default 0) */
  first?: number;
  /** processes at a time (default 2) */
  concurrency?: number;
  /** a process running longer is killed and counted a crash (default 30000 ms) */
  boundMs?: number;
  /** the built entry point (default: dist/host/cli/cli.js of this checkout) */
  cli?: string;
  onCase?: (done: number, tally: ProcessTally) => void;
}

/** dist/host/cli/cli.js of the checkout holding this file, whether run from bench/ or dist/bench/ */
function defaultCli(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  while (!existsSync(join(dir, 'package.json')) && dirname(dir) !== dir) dir = dirname(dir);
  return join(dir, 'dist', 'host', 'cli', 'cli.js');
}

interface Outcome { code: number | null; signal: NodeJS.Signals | null; stderr: string; timedOut: boolean; elapsedMs: number }

const STDERR_KEPT_BYTES = 64 * 1024;

function runProcess(cli: string, args: string[], cwd: string, boundMs: number): Promise<Outcome> {
  return new Promise((resolve) => {
    const started = performance.now();
    const child = spawn(process.execPath, [cli, ...args], { cwd, stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    let timedOut = false;
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (text: string) => { if (stderr.length < STDERR_KEPT_BYTES) stderr += text; });
    const timer = setTimeout(() => { timedOut = true; child.kill('SIGKILL'); }, boundMs);
    child.on('close', (code, signal) => {
      clearTimeout(timer);
      resolve({ code, signal, stderr, timedOut, elapsedMs: performance.now() - started });
    });
  });
}

/** a line of a JavaScript stack trace, or a note node prints for an uncaught error */
const STACK_LINE = /^\s+at .+(:\d+:\d+\)?|\(native\)|<anonymous>\)?)$|^Node\.js v\d+|^Uncaught /m;

/** what is wrong, from a rejection line: the command name, the place (a file of the campaign's folder, event, line, byte) left out */
function rejectionKind(line: string, command: string, dir: string): string {
  let text = line.startsWith(`jetlag ${command}: `) ? line.slice(`jetlag ${command}: `.length) : line;
  if (text.startsWith(dir)) text = text.replace(/^[^,:]+(, (event \d+( \(line \d+\))?|line \d+|byte \d+))*: /, '');
  return kindOf(text.replaceAll(dir + '/', ''));
}

function classify(outcome: Outcome, target: Target, mutated: string, dir: string, caseNumber: number, tally: ProcessTally): { kind: ProcessFindingKind; detail: string } | null {
  const lastLine = outcome.stderr.trimEnd().split('\n').pop() ?? '';
  if (outcome.timedOut) return { kind: 'timeout', detail: `killed after ${outcome.elapsedMs.toFixed(0)} ms` };
  if (outcome.signal !== null) return { kind: 'signal', detail: outcome.signal };
  if (STACK_LINE.test(outcome.stderr)) return { kind: 'stack trace', detail: outcome.stderr.slice(0, 300).replace(/\n/g, ' | ') };
  if (outcome.code === 0) tally.accepted++;
  else if (outcome.code === 1) tally.checkFailed++;
  else if (outcome.code === 2) {
    const kind = `${target.command}: ${rejectionKind(lastLine, target.command, dir)}`;
    tally.rejected.set(kind, (tally.rejected.get(kind) ?? 0) + 1);
    // lines before the last may report invalid events, each led by the command as well
    const lines = outcome.stderr.trimEnd().split('\n');
    const rough = lines.some((line) => !line.startsWith(`jetlag ${target.command}: `)) ? 'a line not led by the command'
      : lastLine.startsWith(`jetlag ${target.command}: ${mutated}`) && !/, byte \d+/.test(lastLine) ? 'names the input but no byte' : null;
    if (rough !== null) {
      const seen = tally.roughRejections.get(`${rough}: ${kind}`) ?? { count: 0, example: `case ${caseNumber}: ` + outcome.stderr.slice(0, 400).replaceAll(dir + '/', '').replace(/\n/g, ' | ') };
      seen.count++;
      tally.roughRejections.set(`${rough}: ${kind}`, seen);
    }
  } else return { kind: 'exit code', detail: `exit ${outcome.code}: ${lastLine.slice(0, 200)}` };
  return null;
}

export async function runProcessCampaign(options: ProcessCampaignOptions): Promise<ProcessTally> {
  const cli = options.cli ?? defaultCli();
  if (!existsSync(cli)) throw new Error(`${cli} is missing: build it first (npm run build:host)`);
  const boundMs = options.boundMs ?? 30_000;
  const seeds = new Map(makeSeeds().map((s) => [s.name, s]));
  const seedList = [...seeds.values()];
  const tally: ProcessTally = {
    cases: 0, accepted: 0, checkFailed: 0, rejected: new Map(), roughRejections: new Map(), byCommand: new Map(), findings: [], slowestMs: 0,
  };
  const dir = mkdtempSync(join(tmpdir(), 'jetlag-fuzz-processes-'));
  const valid: ValidFiles = { events: join(dir, 'valid.jetlag'), jets: join(dir, 'valid.jets'), summary: join(dir, 'valid-summary.json') };
  writeFileSync(valid.events, seeds.get('event file')!.bytes);
  writeFileSync(valid.jets, seeds.get('jets file')!.bytes);
  writeFileSync(valid.summary, seeds.get('run summary')!.bytes);
  let next = options.first ?? 0;
  const end = next + options.count;
  const worker = async (): Promise<void> => {
    while (next < end) {
      const caseNumber = next++;
      const random = makeRandom(mix32(options.seed * 0x85ebca6b + caseNumber));
      const target = TARGETS[Math.floor(random() * TARGETS.length)];
      const donor = seedList[Math.floor(random() * seedList.length)].bytes;
      const { bytes, how } = mutate(seeds.get(target.input)!.bytes, donor, random);
      const mutated = join(dir, `case-${caseNumber}`);
      const out = join(dir, `case-${caseNumber}.out`);
      writeFileSync(mutated, bytes);
      const args = target.args(mutated, valid, out);
      const outcome = await runProcess(cli, args, dir, boundMs);
      rmSync(mutated, { force: true });
      rmSync(out, { force: true });
      const finding = classify(outcome, target, mutated, dir, caseNumber, tally);
      if (finding !== null) {
        tally.findings.push({ ...finding, seed: options.seed, caseNumber, how, commandLine: `${args.join(' ')} (${target.input})` });
      }
      tally.slowestMs = Math.max(tally.slowestMs, outcome.elapsedMs);
      tally.byCommand.set(target.command, (tally.byCommand.get(target.command) ?? 0) + 1);
      tally.cases++;
      options.onCase?.(tally.cases, tally);
    }
  };
  try {
    await Promise.all(Array.from({ length: Math.max(1, options.concurrency ?? 2) }, worker));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return tally;
}

export function formatProcessTally(tally: ProcessTally): string {
  const rejected = [...tally.rejected.values()].reduce((a, b) => a + b, 0);
  const lines = [
    `processes ${tally.cases}: accepted ${tally.accepted + tally.checkFailed} (exit 0: ${tally.accepted}, exit 1 a check failed: ${tally.checkFailed}), rejected ${rejected}, crashes ${tally.findings.length}; slowest ${tally.slowestMs.toFixed(0)} ms`,
    'processes by command:',
    ...[...tally.byCommand].sort().map(([name, n]) => `  ${String(n).padStart(8)}  ${name}`),
    'rejected (exit 2), by what was wrong:',
    ...[...tally.rejected].sort((a, b) => b[1] - a[1]).map(([kind, n]) => `  ${String(n).padStart(8)}  ${kind}`),
    `rejections with a line not led by the command, or naming the input without a byte: ${[...tally.roughRejections.values()].reduce((a, b) => a + b.count, 0)}`,
    ...[...tally.roughRejections].sort((a, b) => b[1].count - a[1].count).map(([kind, { count, example }]) => `  ${String(count).padStart(8)}  ${kind}\n            e.g. ${example}`),
    `crashes: ${tally.findings.length}`,
    ...tally.findings.slice(0, 20).map((f) => `  ${f.kind}: seed ${f.seed} case ${f.caseNumber} (${f.how}): jetlag ${f.commandLine}: ${f.detail}`),
  ];
  return lines.join('\n') + '\n';
}
