// An outside program as a clustering engine (`--engine exec:COMMAND ARGS…`): one program
// process per ExecEngine, fed the event stream and read back as a jets stream (the contract
// is exec-stream.ts; one running process is exec-process.ts). Faults are the program's: the
// events they hit fail with a reason, the program is restarted, and the events after go on.
//
// API
//   ExecEngine.start(options): Promise<ExecEngine>     starts the program (handshake included)
//   .submit(event, towerIndex, towerEt): Promise<ExecOutcome>
//       one valid event's towers (any order, before the threshold: they are selected and
//       ordered here); resolves, in submission order, with the program's jets, its own time
//       (serviceNs, from cluster_time_ns) and jetlag's round trip (write -> answer read,
//       monotonic ns), or with the failure; rejects with ExecEngineError when the program
//       cannot be (re)started or has used up its restarts: the run stops there
//   .close(): Promise<void>                            ends the stream, waits for the exit
//   .counts                                            see ExecCounts; the counts add up:
//       sent = answered + refused + exited + timedOut + malformed + in flight
//
// Start-up: the program has max(timeout, 10 s) to answer the stream header with its own, so
// that a per-event timeout of a few budgets does not forbid an interpreter's start-up.
//
// Restarts: after a fault the next submit starts a new process; a fault while starting (no
// header, a wrong header, a crash) counts as a fault too. More than maxRestarts restarts
// needed: ExecEngineError. A program that cannot be spawned at all (no such file, not
// executable) gives ExecEngineError at once.

import { encodeStreamEvent, encodeStreamHeader } from './exec-stream.js';
import { ProgramProcess, type FaultKind, type ProcessFault } from './exec-process.js';
import { Watchdog } from './exec-watchdog.js';
import { ExecEngineError } from './exec-error.js';
import { checkPipePlatform } from './exec-fifo.js';
import { holdThreadOnCpu, type CpuHold } from './exec-cpu.js';
import { DEFAULT_MAX_RECORD_BYTES } from '../input/record-framer.js';
import type { DecodedJets } from '../formats/jets-codec.js';
import type { ClusterSettings, Grid, JetSet } from '../types.js';

export const DEFAULT_ENGINE_RESTARTS = 3;
/** without a budget: a program gets this long per event */
export const DEFAULT_ENGINE_TIMEOUT_MS = 10_000;
/** with a budget: this many budgets per event */
export const ENGINE_TIMEOUT_BUDGETS = 100;

/** --engine-timeout-ms when not given: 100 times the budget, or 10 s without one. */
export function defaultEngineTimeoutMs(budgetNs: number | null): number {
  return budgetNs !== null && budgetNs > 0 ? Math.max(1, Math.ceil((ENGINE_TIMEOUT_BUDGETS * budgetNs) / 1e6)) : DEFAULT_ENGINE_TIMEOUT_MS;
}

export interface ExecEngineOptions {
  /** the program and its arguments (exec-command.ts splits the option's text) */
  argv: string[];
  /** added to jetlag's environment for the program */
  env?: Record<string, string>;
  /** how error lines name the program, e.g. exec:./my-clusterer */
  label: string;
  grid: Grid;
  settings: ClusterSettings;
  /** the event stream header's producer and label texts */
  producer: string;
  streamLabel?: string;
  timeoutMs: number;
  maxRestarts: number;
  maxRecordBytes?: number;
  /** events written before the first is answered (default 1: the round trip is then the pipe and the program only) */
  maxInFlight?: number;
  /** one line per fault, as it happens */
  onFault?: (line: string) => void;
  /**
   * --program-cpu same: this worker's index; the calling thread is held on its CPU before the
   * program starts, and the program (restarts too) inherits it (exec-cpu.ts). Absent: not held.
   */
  cpuWorkerIndex?: number;
}

export type ExecFailureReason = FaultKind | 'refused';

export type ExecOutcome =
  | { ok: true; event: number; jets: JetSet; hasTowers: boolean; serviceNs: number; roundTripNs: number }
  | { ok: false; event: number; reason: ExecFailureReason; message: string };

export interface ExecCounts {
  /** events written to a program */
  sent: number;
  /** answered with jets */
  answered: number;
  /** answered with an error text: the program refused the event */
  refused: number;
  /** failed: the program exited, crashed or closed its output with the event in flight */
  exited: number;
  /** failed: no answer within the timeout */
  timedOut: number;
  /** failed: the program's output broke the contract with the event in flight */
  malformed: number;
  /** faults, with or without events in flight */
  faults: number;
  /** processes started after the first */
  restarts: number;
}

export { ExecEngineError };

type Resolver = (outcome: ExecOutcome) => void;

export class ExecEngine {
  readonly counts: ExecCounts = { sent: 0, answered: 0, refused: 0, exited: 0, timedOut: 0, malformed: 0, faults: 0, restarts: 0 };
  /** the name the program gives itself in its jets header (settings.engine); '' if none */
  engineName = '';
  /** the last fault's line, for the error when the restarts run out */
  lastFault: string | null = null;
  private process: ProgramProcess | null = null;
  private starting: Promise<void> | null = null;
  private readonly headerRecord: Uint8Array;
  private readonly resolvers: Resolver[] = [];
  private resolverHead = 0;
  private readonly maxInFlight: number;
  private readonly watchdog: Watchdog;
  private pumpScheduled = false;
  /** --program-cpu same: where this thread and its program are held; null when not held */
  cpuHold: CpuHold | null = null;

  private constructor(private readonly options: ExecEngineOptions) {
    this.headerRecord = encodeStreamHeader(options.grid, options.settings, options.producer, options.streamLabel ?? '');
    this.maxInFlight = options.maxInFlight ?? 1;
    // the start-up timeout is never shorter than the per-event one
    this.watchdog = new Watchdog(options.timeoutMs);
  }

  static async start(options: ExecEngineOptions): Promise<ExecEngine> {
    // on a system without what the pipes need, one line now rather than a hang at a timeout
    checkPipePlatform(options.label);
    const engine = new ExecEngine(options);
    try {
      // after the watchdog thread exists (it stays free to run anywhere), before the first spawn
      if (options.cpuWorkerIndex !== undefined) engine.cpuHold = holdThreadOnCpu(options.cpuWorkerIndex, options.label);
      await engine.ensureProcess(true);
    } catch (error) {
      engine.watchdog.close();
      engine.releaseCpu();
      throw error;
    }
    return engine;
  }

  get inFlight(): number {
    return this.resolvers.length - this.resolverHead;
  }

  /**
   * Writes the event and, when the window is full (always, with one event in flight), waits
   * for the oldest answer in a blocking read; a fault is settled (its exit status awaited)
   * before the outcome resolves.
   */
  async submit(event: number, towerIndex: Int32Array, towerEt: Float64Array): Promise<ExecOutcome> {
    const record = encodeStreamEvent(event, towerIndex, towerEt, this.options.settings.threshold);
    while (true) {
      await this.ensureProcess(false);
      // other submits ran while this one waited: the process may be full, or gone
      if (this.process!.alive && this.process!.inFlight < this.maxInFlight) break;
      await this.receiveOldest();
    }
    const outcome = new Promise<ExecOutcome>((resolve) => this.resolvers.push(resolve));
    this.counts.sent++;
    const running = this.process!;
    if (running.send(event, record) && running.inFlight >= this.maxInFlight) running.receive();
    if (!running.alive) await running.settled();
    else if (running.inFlight > 0) this.schedulePump();
    return outcome;
  }

  async close(): Promise<void> {
    while (this.inFlight > 0) await this.receiveOldest();
    const running = this.process;
    this.process = null;
    if (running) await running.stop(this.options.timeoutMs);
    this.watchdog.close();
    this.releaseCpu();
  }

  /** The thread's former CPUs back; a failure here ends nothing, the program is gone. */
  private releaseCpu(): void {
    const hold = this.cpuHold;
    this.cpuHold = null;
    try {
      hold?.release();
    } catch {
      // the thread stays on its CPU: only its own later work is confined
    }
  }

  /** The oldest answer of the running process, or its fault, settled. */
  private async receiveOldest(): Promise<void> {
    const running = this.process;
    if (running === null) return;
    if (running.alive && running.inFlight > 0) running.receive();
    if (!running.alive) await running.settled();
  }

  /** Events left in flight under a window of several are read when the caller yields. */
  private schedulePump(): void {
    if (this.pumpScheduled) return;
    this.pumpScheduled = true;
    setImmediate(() => {
      this.pumpScheduled = false;
      const running = this.process;
      while (running !== null && running.alive && running.inFlight > 0) running.receive();
    });
  }

  /** A live process, started (or restarted) when there is none; a fault is settled first. */
  private async ensureProcess(first: boolean): Promise<void> {
    if (this.process !== null && !this.process.alive) await this.process.settled();
    while (this.process === null || !this.process.alive) {
      if (this.starting === null) this.starting = this.startOne(first).finally(() => { this.starting = null; });
      await this.starting;
    }
  }

  private async startOne(first: boolean): Promise<void> {
    if (!first || this.counts.faults > 0) {
      if (this.counts.restarts >= this.options.maxRestarts) {
        throw new ExecEngineError(
          `${this.options.label} failed ${this.counts.faults} times and was restarted ${this.counts.restarts} times (--engine-restarts ${this.options.maxRestarts}); last: ${this.lastFault}`,
        );
      }
      this.counts.restarts++;
    }
    const started = new ProgramProcess(
      {
        argv: this.options.argv,
        env: this.options.env,
        label: this.options.label,
        grid: this.options.grid,
        settings: this.options.settings,
        headerRecord: this.headerRecord,
        timeoutMs: this.options.timeoutMs,
        startTimeoutMs: Math.max(this.options.timeoutMs, DEFAULT_ENGINE_TIMEOUT_MS),
        maxRecordBytes: this.options.maxRecordBytes ?? DEFAULT_MAX_RECORD_BYTES,
      },
      { answered: (event, answer, roundTripNs) => this.onAnswer(event, answer, roundTripNs), faulted: (fault, failed) => this.onFault(fault, failed) },
      this.watchdog,
    );
    const fault = await started.start();
    if (started.spawnError) throw new ExecEngineError(`${this.options.label}: cannot start the program: ${started.spawnError.message}`);
    if (fault !== null) {
      this.noteFault(fault);
      return;
    }
    this.process = started;
    this.engineName = started.engineName;
  }

  private noteFault(fault: ProcessFault): void {
    this.counts.faults++;
    this.lastFault = fault.line;
    this.options.onFault?.(fault.line);
  }

  private nextResolver(): Resolver {
    const resolve = this.resolvers[this.resolverHead++];
    if (this.resolverHead === this.resolvers.length) {
      this.resolvers.length = 0;
      this.resolverHead = 0;
    }
    return resolve;
  }

  private onAnswer(event: number, answer: DecodedJets, roundTripNs: number): void {
    const resolve = this.nextResolver();
    if (answer.error !== '') {
      this.counts.refused++;
      resolve({ ok: false, event, reason: 'refused', message: `${this.options.label}, event ${event}: the program answered with an error: ${answer.error}` });
    } else {
      this.counts.answered++;
      resolve({ ok: true, event, jets: answer.jets, hasTowers: answer.hasTowers, serviceNs: answer.clusterTimeNs, roundTripNs });
    }
  }

  private onFault(fault: ProcessFault, failed: number[]): void {
    this.noteFault(fault);
    for (let k = 0; k < failed.length; k++) {
      const event = failed[k];
      if (fault.kind === 'exited') this.counts.exited++;
      else if (fault.kind === 'timed-out') this.counts.timedOut++;
      else this.counts.malformed++;
      const message = event === fault.event ? fault.line : `${this.options.label}, event ${event}: in flight when the program failed (${fault.line})`;
      this.nextResolver()({ ok: false, event, reason: fault.kind, message });
    }
  }
}
