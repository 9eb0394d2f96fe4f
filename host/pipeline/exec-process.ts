// One running instance of an outside clustering program (exec-engine.ts restarts them): the
// child process (started by exec-spawn.ts), its stdin (event stream out) and stdout (jets stream
// in, cut by the project's record framer under the record cap) on blocking pipes, and its
// stderr in a file for the tail that fault lines quote.
//
//   start()                   spawns, writes the stream header, waits for the program's jets
//                             header (the handshake keeps start-up out of the first event's
//                             round trip)
//   send(event, recordBytes)  writes one event with a blocking write
//   receive()                 waits in a blocking read until the next answer is in (the
//                             `answered` callback, in the order sent) or the instance faults
//   settled()                 a fault's completion: the exit status is awaited on the event
//                             loop, then the `faulted` callback
//   stop(graceMs)             ends stdin, waits for the program to exit, kills it after graceMs
//
// Why blocking: while its event is out the worker has nothing else to do, and a read that
// returns the moment the answer's last byte is in costs less than a wake-up of the event loop
// (README, "Timing your own program"). A blocking read cannot time out, so a watchdog thread
// (exec-watchdog.ts) kills the program's group at the deadline and wakes the read; stderr goes to a
// file, which never needs reading while the worker waits; only a fault's exit status is awaited
// on the event loop.
//
// Faults end the instance: every event in flight fails with the fault's line, the process is
// killed, and nothing it writes afterwards is read. Kinds: 'exited' (exit, crash, closed
// stdout or stdin), 'timed-out' (no answer within the timeout, counted from when the event was
// written or, behind another event, from that event's answer), 'malformed' (bad framing, a
// record that is not the jets record due, a bad header).
//
// In flight: exec-in-flight.ts. Times are process.hrtime.bigint() (monotonic) as numbers of ns.

import type { ChildProcess } from 'node:child_process';
import { readSync, writeSync } from 'node:fs';
import { RecordFramer } from '../input/record-framer.js';
import { checkProgramHeader, readProgramAnswer } from './exec-stream.js';
import { closeJetlagEnds, type ProgramPipes } from './exec-fifo.js';
import type { StderrFile } from './exec-stderr.js';
import { killProgramGroup, spawnProgram } from './exec-spawn.js';
import { forgetProgramGroup, noteProgramGroup } from './exec-groups.js';
import { InFlightEvents } from './exec-in-flight.js';
import type { Watchdog } from './exec-watchdog.js';
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
  /** roundTripNs: from max(the event's write, the previous answer's arrival) to its answer's arrival */
  answered(event: number, answer: DecodedJets, roundTripNs: number): void;
  /** once per instance, after start(); `inFlight` are the events that fail with it, oldest first */
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

/** stderr lines quoted in a fault line, from the file's last bytes */
const STDERR_TAIL_LINES = 3;
/** after stdout closes, how long to wait for the exit status before killing */
const EXIT_STATUS_WAIT_MS = 1000;
/** one read takes a whole pileup-200 answer */
const READ_CHUNK_BYTES = 1 << 16;

const now = (): number => Number(process.hrtime.bigint());

export class ProgramProcess {
  private readonly child: ChildProcess;
  private readonly pipes: ProgramPipes;
  private readonly framer: RecordFramer;
  private readonly chunk = Buffer.allocUnsafe(READ_CHUNK_BYTES);
  private readonly stderr: StderrFile;
  private headerSeen = false;
  /** faulted or stopped: nothing more is read, nothing more fails */
  private ended = false;
  private settling: Promise<ProcessFault | null> = Promise.resolve(null);
  private exitStatus: { code: number | null; signal: NodeJS.Signals | null } | null = null;
  private exitWaiters: (() => void)[] = [];
  private spawnWaiter: (() => void) | null = null;
  private readonly sent = new InFlightEvents();
  /** when the previous answer came in (0: none yet): the next event's round trip starts no earlier */
  private previousAnswerNs = 0;
  /** the name the program gives itself in its header (settings.engine) */
  engineName = '';
  /** spawn failure (ENOENT, EACCES): restarting cannot help */
  spawnError: Error | null = null;

  constructor(private readonly config: ProcessSettings, private readonly handlers: ProcessHandlers, private readonly watchdog: Watchdog) {
    this.framer = new RecordFramer(config.maxRecordBytes);
    ({ child: this.child, pipes: this.pipes, stderr: this.stderr } = spawnProgram(config.argv, config.env, config.label));
    this.child.on('error', (error) => {
      this.spawnError = error;
      this.spawnWaiter?.();
    });
    const pid = this.child.pid;
    if (pid !== undefined) noteProgramGroup(pid);
    this.child.on('exit', (code, signal) => {
      if (pid !== undefined) forgetProgramGroup(pid);
      this.exitStatus = { code, signal };
      for (const wake of this.exitWaiters.splice(0)) wake();
    });
  }

  get inFlight(): number {
    return this.sent.count;
  }

  get alive(): boolean {
    return !this.ended;
  }

  /** Writes the stream header and waits for the program's; null when it came and fits. */
  async start(): Promise<ProcessFault | null> {
    if (this.child.pid === undefined) {
      if (this.spawnError === null) await new Promise<void>((resolve) => { this.spawnWaiter = resolve; });
      this.ended = true;
      closeJetlagEnds(this.pipes);
      this.stderr.close();
      return { kind: 'exited', line: `${this.config.label}: cannot start: ${this.spawnError!.message}`, event: null };
    }
    this.watchdog.arm(this.child.pid, this.pipes.answersIn, BigInt(now()) + BigInt(this.config.startTimeoutMs) * 1_000_000n);
    if (this.writeWhole(this.config.headerRecord)) {
      while (!this.headerSeen && !this.ended) this.readOnce();
    }
    if (!this.ended) this.watchdog.disarm();
    return this.ended ? this.settling : null;
  }

  /** Writes one event; false when the program is gone (settled() then says why). */
  send(event: number, record: Uint8Array): boolean {
    if (this.ended) throw new Error('send() on an ended program process');
    const writtenNs = now();
    // the watchdog covers the write too: a program that stops reading blocks it
    if (this.inFlight === 0) this.watchdog.arm(this.child.pid!, this.pipes.answersIn, BigInt(writtenNs) + BigInt(this.config.timeoutMs) * 1_000_000n);
    this.sent.push(event, writtenNs);
    return this.writeWhole(record);
  }

  /** Blocks until the oldest event in flight is answered (true) or the instance faults (false). */
  receive(): boolean {
    const due = this.inFlight;
    while (!this.ended && this.inFlight === due) this.readOnce();
    return !this.ended;
  }

  /** The fault that ended this instance, once its line is complete (null: none). */
  settled(): Promise<ProcessFault | null> {
    return this.settling;
  }

  /** Ends the stream; resolves when the program has exited (killed after graceMs). */
  async stop(graceMs: number): Promise<void> {
    if (this.ended) {
      await this.settling;
      return this.kill();
    }
    this.ended = true;
    this.watchdog.disarm();
    closeJetlagEnds(this.pipes);
    if (!(await this.waitForExit(graceMs))) this.kill();
    this.stderr.close();
  }

  private writeWhole(bytes: Uint8Array): boolean {
    try {
      for (let written = 0; written < bytes.length;) written += writeSync(this.pipes.eventsOut, bytes, written);
      return true;
    } catch (error) {
      // EPIPE: the program closed its stdin, most often by exiting; its exit status says more
      if (this.watchdog.disarm()) this.fault('exited', this.sent.oldest, '', 'input');
      else this.timedOut();
      return false;
    }
  }

  /** One blocking read of the program's output, framed; faults on end of file or the watchdog. */
  private readOnce(): void {
    let count: number;
    try {
      count = readSync(this.pipes.answersIn, this.chunk, 0, READ_CHUNK_BYTES, null);
    } catch (error) {
      count = 0;
      if ((error as NodeJS.ErrnoException).code === 'EAGAIN') return;
    }
    const arrivedNs = now();
    if (this.watchdog.fired) return this.timedOut();
    if (count === 0) {
      this.framer.finish();
      const cut = this.framer.problem ? ` (${this.framer.problem.detail}, output byte ${this.framer.problem.offset})` : '';
      if (!this.watchdog.disarm()) return this.timedOut();
      return this.fault('exited', this.sent.oldest, cut, 'output');
    }
    this.framer.feed(this.chunk.subarray(0, count), (bytes, offset) => {
      if (!this.ended) this.onRecord(bytes, offset, arrivedNs);
    });
    if (this.framer.problem && !this.ended) {
      this.fault('malformed', this.sent.oldest, `output byte ${this.framer.problem.offset}: ${this.framer.problem.detail}`, null);
    }
  }

  private onRecord(bytes: Uint8Array, offset: number, arrivedNs: number): void {
    if (!this.headerSeen) {
      const checked = checkProgramHeader(bytes, this.config.grid, this.config.settings);
      if ('problem' in checked) return this.fault('malformed', null, `output byte ${offset}: ${checked.problem}`, null);
      this.engineName = checked.engineName;
      this.headerSeen = true;
      return;
    }
    const due = this.sent.oldest;
    if (due === null) {
      return this.fault('malformed', null, `output byte ${offset}: a record with no event in flight (one answer per event)`, null);
    }
    const result = readProgramAnswer(bytes, due, this.sent.pending());
    if (!result.ok) return this.fault('malformed', due, `output byte ${offset}: ${result.problem}`, null);
    // answered at the deadline: the watchdog has killed the program already
    if (!this.watchdog.disarm()) return this.timedOut();
    // with several events in flight an event queues behind the one before it: its round trip,
    // like its timeout, counts from when the program could start on it
    const startedNs = Math.max(this.sent.oldestWrittenNs, this.previousAnswerNs);
    this.previousAnswerNs = arrivedNs;
    this.sent.dropOldest();
    if (this.sent.count > 0) {
      const sinceNs = Math.max(arrivedNs, this.sent.oldestWrittenNs);
      this.watchdog.arm(this.child.pid!, this.pipes.answersIn, BigInt(Math.round(sinceNs)) + BigInt(this.config.timeoutMs) * 1_000_000n);
    }
    this.stderr.trim();
    this.handlers.answered(due, result.answer, arrivedNs - startedNs);
  }

  private timedOut(): void {
    const what = this.headerSeen ? `no answer within ${this.config.timeoutMs} ms` : `no jets header within ${this.config.startTimeoutMs} ms of starting`;
    this.fault('timed-out', this.sent.oldest, `${what} (timed out); killed`, null);
  }

  /**
   * Ends this instance once: the events in flight are taken now, the line is completed on the
   * event loop, then reported. `closed`: the program closed its output or its input, so the
   * line waits for its exit status and quotes its stderr's last lines (`detail` then follows the exit).
   * The watchdog is disarmed (or has fired) before any fault, so the answers fd may close.
   */
  private fault(kind: FaultKind, event: number | null, detail: string, closed: 'output' | 'input' | null): void {
    if (this.ended) return;
    this.ended = true;
    this.watchdog.disarm();
    const failed = this.sent.takeAll();
    if (closed === null) this.kill();
    const where = event !== null ? `${this.config.label}, event ${event}` : this.config.label;
    const reported = this.headerSeen;
    this.settling = (async () => {
      let line = `${where}: ${detail}`;
      if (closed !== null) {
        // stdout (or stdin) closed first; the exit status follows, or the program keeps
        // running without it, and is killed
        const exited = await this.waitForExit(EXIT_STATUS_WAIT_MS);
        const how = exited ? describeExit(this.exitStatus!) : `closed its ${closed} and was killed`;
        line = `${where}: ${how}${detail}${this.stderrText()}`;
        this.kill();
      }
      const fault: ProcessFault = { kind, line, event };
      if (reported) this.handlers.faulted(fault, failed);
      return fault;
    })();
  }

  private waitForExit(ms: number): Promise<boolean> {
    if (this.exitStatus !== null) return Promise.resolve(true);
    return new Promise((resolve) => {
      const timer = setTimeout(() => resolve(this.exitStatus !== null), ms);
      this.exitWaiters.push(() => { clearTimeout(timer); resolve(true); });
    });
  }

  private stderrText(): string {
    const lines = this.stderr.tail().toString('utf8').split(/\r?\n/).map((line) => line.trim()).filter((line) => line !== '');
    if (lines.length === 0) return '';
    return `; its stderr ended: ${lines.slice(-STDERR_TAIL_LINES).map((line) => JSON.stringify(line)).join(' | ')}`;
  }

  private kill(): void {
    // the whole group: a child left holding stdin or stdout would keep a blocking write or read waiting
    if (this.child.pid !== undefined) killProgramGroup(this.child.pid);
    closeJetlagEnds(this.pipes);
    this.stderr.close();
  }
}

function describeExit(status: { code: number | null; signal: NodeJS.Signals | null }): string {
  if (status.signal !== null) return `was killed by ${status.signal}`;
  return `exited with status ${status.code}`;
}
