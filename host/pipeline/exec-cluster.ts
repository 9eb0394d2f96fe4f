// An engine program in the plain, in-thread commands (`cluster --engine exec:…`): starting it
// for an input, and the figures of its run, which say which clock measured what.
//
// API
//   startProgramEngine(choice, grid, settings, inputLabel, maxRecordBytes?): Promise<ExecEngine>
//   new ProgramTimes()    .add(serviceNs, roundTripNs) per answered event; .figures()
//   describeProgramRun(name, counts, figures): string   one summary line (no command prefix)

import { ExecEngine, type ExecCounts } from './exec-engine.js';
import type { ProgramCpu } from './exec-cpu.js';
import type { ClusterSettings, Grid } from '../types.js';
import { producerName } from '../version.js';

/** What `--engine exec:…`, `--engine-timeout-ms` and `--engine-restarts` chose. */
export interface ProgramEngineChoice {
  argv: string[];
  /** how lines name the program: exec: and the command as given */
  label: string;
  timeoutMs: number;
  maxRestarts: number;
  /** one line per fault of the program */
  onFault: (line: string) => void;
  /** --engine-in-flight: events given to the program ahead of its answers (absent: 1) */
  maxInFlight?: number;
  /** --program-cpu: same holds this thread and the program on one CPU (exec-cpu.ts); absent: any */
  programCpu?: ProgramCpu;
}

export function startProgramEngine(
  choice: ProgramEngineChoice, grid: Grid, settings: ClusterSettings, inputLabel: string, maxRecordBytes?: number,
): Promise<ExecEngine> {
  const { programCpu, ...engineChoice } = choice;
  return ExecEngine.start({
    ...engineChoice,
    // one program, on the thread that runs the command: the first CPU it may use
    ...(programCpu === 'same' ? { cpuWorkerIndex: 0 } : {}),
    grid,
    settings,
    producer: producerName('cluster'),
    streamLabel: `events of ${inputLabel}`,
    maxRecordBytes,
  });
}

export interface ProgramFigures {
  answered: number;
  /** the program's own clustering time (its cluster_time_ns), median */
  serviceNsP50: number | null;
  /** write of the event to read of its answer, jetlag's monotonic clock, median */
  roundTripNsP50: number | null;
  /** round trip minus the program's own time per event, median: the pipe's and the codecs' cost */
  pipeNsP50: number | null;
}

export class ProgramTimes {
  private service: number[] = [];
  private roundTrip: number[] = [];
  private pipe: number[] = [];

  add(serviceNs: number, roundTripNs: number): void {
    this.service.push(serviceNs);
    this.roundTrip.push(roundTripNs);
    this.pipe.push(roundTripNs - serviceNs);
  }

  figures(): ProgramFigures {
    return {
      answered: this.service.length,
      serviceNsP50: median(this.service),
      roundTripNsP50: median(this.roundTrip),
      pipeNsP50: median(this.pipe),
    };
  }
}

function median(values: number[]): number | null {
  if (values.length === 0) return null;
  const sorted = Float64Array.from(values).sort();
  const middle = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[middle] : (sorted[middle - 1] + sorted[middle]) / 2;
}

function microseconds(ns: number | null): string {
  return ns === null ? '-' : `${(ns / 1000).toFixed(1)} µs`;
}

export function describeProgramRun(label: string, engineName: string, counts: ExecCounts, figures: ProgramFigures): string {
  const failed = counts.exited + counts.timedOut + counts.malformed;
  const faults = failed + counts.refused === 0
    ? 'no event failed'
    : `failed: ${counts.exited} exited, ${counts.timedOut} timed out, ${counts.malformed} malformed output, ${counts.refused} refused by the program`;
  return `${label} (calls itself ${JSON.stringify(engineName)}): ${counts.sent} events sent, ${counts.answered} answered, ${faults}; `
    + `${counts.restarts} restart${counts.restarts === 1 ? '' : 's'}; p50 times: the program's own ${microseconds(figures.serviceNsP50)}, `
    + `round trip ${microseconds(figures.roundTripNsP50)}, the difference (pipe and codecs) ${microseconds(figures.pipeNsP50)}`;
}
