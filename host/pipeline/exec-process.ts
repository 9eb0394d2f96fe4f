// One running instance of an outside clustering program (exec-engine.ts restarts them): the
// child process, its stdin (event stream out), its stdout (jets stream in, cut by the
// project's record framer under the record cap) and the tail of its stderr.
//
//   start()                   spawns, writes the stream header, waits for the program's jets
//                             header (the handshake keeps start-up out of the first event's
//                             round trip)
//   send(event, recordBytes)  writes one event; its answer or its failure comes back through
//                             the `answered` / `failed` callbacks, in the order sent
//   stop(graceMs)             ends stdin, waits for the program to exit, kills it after graceMs
//
// Faults end the instance: every event in flight fails with the fault's line, the process is
// killed, and nothing it writes afterwards is read. Kinds: 'exited' (exit, crash or closed
// stdout), 'timed-out' (no answer within the timeout, counted from when the event was written
// or, behind another event, from that event's answer), 'malformed' (bad framing, a record
// that is not the jets record due, a bad header).
//
// In flight: parallel arrays used as a queue, head at inFlightHead; an event is written once
// and answered or failed once. Times are process.hrtime.bigint() (monotonic) as numbers of ns.

import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { RecordFramer } from '../input/record-framer.js';
import { checkProgramHeader, readProgramAnswer } from './exec-stream.js';
import type { DecodedJets } from '../formats/jets-codec.js';
import type { ClusterSettings, Grid } from '../types.js';

export type FaultKind = 'exited' | 'timed-out' | 'malformed';

export interface ProcessFault {
  kind: FaultKind;
  /** one line: program, event (when one was due), byte offset (malformed), what happened */
  line: string;
  /** the event the fault is about; null when none was in flight */
  event: number | null;
}

export interface ProcessHandlers {
  answered(event: number, answer: DecodedJets, roundTripNs: number): void;
  /** once per instance; `inFlight` are the events that fail with it, oldest first */
  faulted(fault: ProcessFault, inFlight: number[]): void;
}

export interface ProcessSettings {
  argv: string[];
  /** added to jetlag's environment for the program */
  env?: Record<string, string>;
  /** name in error lines, e.g. exec:./my-clusterer */
  label: string;
  grid: Grid;
  settings: ClusterSettings;
  headerRecord: Uint8Array;
  timeoutMs: number;
  /** how long the program has to answer the header: start-up is not clustering */
  startTimeoutMs: number;
  maxRecordBytes: number;
}

/** stderr kept for fault lines: the last bytes, then the last lines of those */
const STDERR_TAIL_BYTES = 4096;
const STDERR_TAIL_LINES = 3;
/** after stdout closes, how long to wait for the exit status before killing */
const EXIT_STATUS_WAIT_MS = 1000;

const now = (): number => Number(process.hrtime.bigint());

export class ProgramProcess {
  private readonly child: ChildProcessWithoutNullStreams;
  private readonly framer: RecordFramer;
  private stderrTail: Buffer = Buffer.alloc(0);
  private headerSeen = false;
  private headerWaiter: ((fault: ProcessFault | null) => void) | null = null;
  /** faulted or stopped: nothing more is read, nothing more fails */
  private ended = false;
  /** stdout closed by the program: waiting for its exit status before the fault */
  private outputClosed = false;
  private stderrEnded = false;
  private exitStatus: { code: number | null; signal: NodeJS.Signals | null } | null = null;
  private exitWaiters: (() => void)[] = [];
  private readonly inFlightEvents: number[] = [];
  private readonly inFlightWrittenNs: number[] = [];
  private inFlightHead = 0;
  private headSinceNs = 0;
  private timer: NodeJS.Timeout | null = null;
  /** the name the program gives itself in its header (settings.engine) */
  engineName = '';
  /** spawn failure (ENOENT, EACCES): restarting cannot help */
  spawnError: Error | null = null;

  constructor(private readonly config: ProcessSettings, private readonly handlers: ProcessHandlers) {
    this.framer = new RecordFramer(config.maxRecordBytes);
    this.child = spawn(config.argv[0], config.argv.slice(1), {
      stdio: ['pipe', 'pipe', 'pipe'],
      env: config.env ? { ...process.env, ...config.env } : process.env,
    });
    this.child.on('error', (error) => {
      this.spawnError = error;
      this.fault('exited', null, `cannot start: ${error.message}`);
    });
    this.child.on('exit', (code, signal) => {
      this.exitStatus = { code, signal };
      for (const wake of this.exitWaiters.splice(0)) wake();
    });
    // a program that stops reading makes writes fail with EPIPE; its closed stdout says more
    this.child.stdin.on('error', () => {});
    this.child.stdout.on('data', (chunk: Buffer) => this.onOutput(chunk));
    this.child.stdout.on('end', () => this.onOutputEnd());
    this.child.stderr.on('end', () => { this.stderrEnded = true; });
    this.child.stderr.on('data', (chunk: Buffer) => {
      const joined = Buffer.concat([this.stderrTail, chunk]);
      this.stderrTail = joined.length > STDERR_TAIL_BYTES ? joined.subarray(joined.length - STDERR_TAIL_BYTES) : joined;
    });
  }

  get inFlight(): number {
    return this.inFlightEvents.length - this.inFlightHead;
  }

  get alive(): boolean {
    return !this.ended;
  }

  /** Writes the stream header and waits for the program's; null when it came and fits. */
  start(): Promise<ProcessFault | null> {
    this.child.stdin.write(this.config.headerRecord);
    return new Promise((resolve) => {
      if (this.ended) return resolve({ kind: 'exited', line: `${this.config.label}: ended before writing its header`, event: null });
      this.headerWaiter = resolve;
      this.armTimer();
    });
  }

  send(event: number, record: Uint8Array): void {
    if (this.ended) throw new Error('send() on an ended program process');
    const writtenNs = now();
    // the write first: the bookkeeping and the timer (which counts from writtenNs) are jetlag's
    // work, not the pipe's, and would otherwise sit inside the round trip
    this.child.stdin.write(record);
    this.inFlightEvents.push(event);
    this.inFlightWrittenNs.push(writtenNs);
    if (this.inFlight === 1) { this.headSinceNs = writtenNs; this.armTimer(); }
  }

  /** Ends the stream; resolves when the program has exited (killed after graceMs). */
  async stop(graceMs: number): Promise<void> {
    if (this.ended) return this.kill();
    this.ended = true;
    this.clearTimer();
    this.child.stdin.end();
    if (!(await this.waitForExit(graceMs))) this.kill();
  }

  private onOutput(chunk: Buffer): void {
    if (this.ended || this.outputClosed) return;
    const arrivedNs = now();
    this.framer.feed(chunk, (bytes, offset) => {
      if (!this.ended) this.onRecord(bytes, offset, arrivedNs);
    });
    if (this.framer.problem && !this.ended) {
      this.fault('malformed', this.dueEvent(), `output byte ${this.framer.problem.offset}: ${this.framer.problem.detail}`);
    }
  }

  private dueEvent(): number | null {
    return this.inFlight > 0 ? this.inFlightEvents[this.inFlightHead] : null;
  }

  private onRecord(bytes: Uint8Array, offset: number, arrivedNs: number): void {
    if (!this.headerSeen) {
      const checked = checkProgramHeader(bytes, this.config.grid, this.config.settings);
      if ('problem' in checked) return this.fault('malformed', null, `output byte ${offset}: ${checked.problem}`);
      this.engineName = checked.engineName;
      this.headerSeen = true;
      this.clearTimer();
      const waiter = this.headerWaiter;
      this.headerWaiter = null;
      if (waiter) waiter(null);
      return;
    }
    const due = this.dueEvent();
    if (due === null) {
      return this.fault('malformed', null, `output byte ${offset}: a record with no event in flight (one answer per event)`);
    }
    const pending = this.inFlightEvents.slice(this.inFlightHead);
    const result = readProgramAnswer(bytes, due, pending);
    if (!result.ok) return this.fault('malformed', due, `output byte ${offset}: ${result.problem}`);
    const writtenNs = this.inFlightWrittenNs[this.inFlightHead];
    this.inFlightHead++;
    if (this.inFlightHead === this.inFlightEvents.length) {
      // queue empty: start over so the arrays do not grow for the life of the process
      this.inFlightEvents.length = 0;
      this.inFlightWrittenNs.length = 0;
      this.inFlightHead = 0;
      this.clearTimer();
    } else {
      this.headSinceNs = Math.max(arrivedNs, this.inFlightWrittenNs[this.inFlightHead]);
      this.armTimer();
    }
    this.handlers.answered(due, result.answer, arrivedNs - writtenNs);
  }

  private onOutputEnd(): void {
    if (this.ended || this.outputClosed) return;
    this.framer.finish();
    const cut = this.framer.problem ? ` (${this.framer.problem.detail}, output byte ${this.framer.problem.offset})` : '';
    // stdout closed first; the exit status and the rest of stderr follow (or the program
    // keeps running without its output, and is killed)
    this.outputClosed = true;
    this.clearTimer();
    void this.waitForExit(EXIT_STATUS_WAIT_MS).then(async (exited) => {
      if (exited) await this.waitForStderr(EXIT_STATUS_WAIT_MS);
      const how = exited ? describeExit(this.exitStatus!) : 'closed its output and was killed';
      this.fault('exited', this.dueEvent(), `${how}${cut}${this.stderrText()}`);
    });
  }

  private waitForExit(ms: number): Promise<boolean> {
    if (this.exitStatus !== null) return Promise.resolve(true);
    return new Promise((resolve) => {
      const timer = setTimeout(() => resolve(this.exitStatus !== null), ms);
      this.exitWaiters.push(() => { clearTimeout(timer); resolve(true); });
    });
  }

  private async waitForStderr(ms: number): Promise<void> {
    const deadline = Date.now() + ms;
    while (!this.stderrEnded && Date.now() < deadline) await new Promise((resolve) => setTimeout(resolve, 5));
  }

  private stderrText(): string {
    const lines = this.stderrTail.toString('utf8').split(/\r?\n/).map((line) => line.trim()).filter((line) => line !== '');
    if (lines.length === 0) return '';
    return `; its stderr ended: ${lines.slice(-STDERR_TAIL_LINES).map((line) => JSON.stringify(line)).join(' | ')}`;
  }

  private armTimer(): void {
    this.clearTimer();
    const limitMs = this.headerSeen ? this.config.timeoutMs - (now() - this.headSinceNs) / 1e6 : this.config.startTimeoutMs;
    this.timer = setTimeout(() => this.onTimeout(), Math.max(0, limitMs));
  }

  private clearTimer(): void {
    if (this.timer !== null) clearTimeout(this.timer);
    this.timer = null;
  }

  private onTimeout(): void {
    this.timer = null;
    if (this.ended || this.outputClosed) return;
    const what = this.headerSeen ? `no answer within ${this.config.timeoutMs} ms` : `no jets header within ${this.config.startTimeoutMs} ms of starting`;
    this.fault('timed-out', this.dueEvent(), `${what} (timed out); killed`);
  }

  /** Ends this instance once: kills the program and fails everything in flight. */
  private fault(kind: FaultKind, event: number | null, detail: string): void {
    if (this.ended) return;
    this.ended = true;
    this.clearTimer();
    this.kill();
    const where = event !== null ? `${this.config.label}, event ${event}` : this.config.label;
    const fault: ProcessFault = { kind, line: `${where}: ${detail}`, event };
    const failed = this.inFlightEvents.slice(this.inFlightHead);
    this.inFlightEvents.length = 0;
    this.inFlightWrittenNs.length = 0;
    this.inFlightHead = 0;
    const waiter = this.headerWaiter;
    this.headerWaiter = null;
    if (waiter) waiter(fault);
    else this.handlers.faulted(fault, failed);
  }

  private kill(): void {
    if (this.exitStatus === null && this.child.exitCode === null) this.child.kill('SIGKILL');
    this.child.stdout.destroy();
    this.child.stderr.destroy();
    this.child.stdin.destroy();
  }
}

function describeExit(status: { code: number | null; signal: NodeJS.Signals | null }): string {
  if (status.signal !== null) return `was killed by ${status.signal}`;
  return `exited with status ${status.code}`;
}
