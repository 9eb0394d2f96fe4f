// The busy-machine verdict with an engine program (--engine exec:): the program's CPU time is
// another process's, so the process's CPU against its workers' time on events (which holds the
// waits for the program) is not judged, and the summary says so; the load average and the
// workers' wait for a CPU still count.

import { describe, expect, it } from 'vitest';
import { MachineLoadProbe, PROGRAM_CPU_NOTE, judgeMachineLoad } from '../host/measure/machine-load.js';

// seen with the Python example at pileup 20: 0.03 s of CPU for 0.08 s on events
const waitingOnProgram = { cores: 2, loadAverageStart: 0.5, loadAverageEnd: 1.0, cpuSeconds: 0.03, wallSeconds: 0.1, workerBusySeconds: 0.08 };

describe('the machine as measured with an engine program', () => {
  it('is not busy for the process\'s CPU against its workers\' time on events', () => {
    expect(judgeMachineLoad(waitingOnProgram).busy).toBe(true);
    const load = judgeMachineLoad({ ...waitingOnProgram, programCpuNote: PROGRAM_CPU_NOTE });
    expect(load).toMatchObject({ busy: false, busyReason: null, programCpuNote: PROGRAM_CPU_NOTE });
  });

  it('is still busy for the load average and for the workers\' wait for a CPU', () => {
    const loaded = judgeMachineLoad({ ...waitingOnProgram, programCpuNote: PROGRAM_CPU_NOTE, loadAverageStart: 6.5 });
    expect(loaded.busyReason).toBe('load average 6.50 before the run on 2 cores');
    const waited = judgeMachineLoad({ ...waitingOnProgram, programCpuNote: PROGRAM_CPU_NOTE, workerCpuWaitSeconds: 0.05, workerServeSeconds: 0.2 });
    expect(waited.busyReason).toBe('the workers waited 0.05 s for a CPU in 0.20 s of serving');
  });

  it('is noted by the probe of a run with a program, and only there', () => {
    expect(new MachineLoadProbe(true).finish(60e9).programCpuNote).toBe(PROGRAM_CPU_NOTE);
    expect(new MachineLoadProbe(true).finish(60e9).busyReason ?? '').not.toContain('the process got');
    expect(new MachineLoadProbe().finish(60e9).programCpuNote).toBeUndefined();
    expect(new MachineLoadProbe().finish(60e9).busyReason).toContain('the process got');
  });
});
