// `--program-cpu same|any` of `run` and `cluster` with an engine program: whether each worker
// thread and its program are held on one CPU (pipeline/exec-cpu.ts says why and how).

import type { OptionSpec } from './args.js';

export const PROGRAM_CPU_OPTION: OptionSpec = {
  name: 'program-cpu',
  kind: 'string',
  argument: '<same|any>',
  description: 'exec: engines, Linux: same holds each worker thread and its program on one CPU (worker k on the k-th allowed CPU, modulo their number; taskset), so that neither waits for the other to be woken on another CPU; any leaves them to the scheduler (default: any)',
};
