// A one-node Slurm cluster on this machine for the farm test, set up as
// /work/shared/notes/slurm-one-node.md describes (Debian's slurm-wlm and munge, process
// tracking without cgroups). Every daemon started here is stopped by the PID it was started
// with; a daemon that was already running is left alone.

import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, openSync, closeSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { alive } from './process-alive.js';

const SLURM_CONF = '/etc/slurm/slurm.conf';
const MUNGE_PID_FILE = '/run/munge/munged.pid';

function has(command: string): boolean {
  return spawnSync('sh', ['-c', `command -v ${command}`], { stdio: 'ignore' }).status === 0;
}

/** Output of a command, or throws with the command's own stderr. */
function run(command: string, args: string[], timeoutMs = 30_000, env: NodeJS.ProcessEnv = process.env): string {
  const result = spawnSync(command, args, { encoding: 'utf8', timeout: timeoutMs, env });
  if (result.error) throw new Error(`${command}: ${result.error.message}`);
  if (result.status !== 0) throw new Error(`${command} ${args.join(' ')}: exit ${result.status}: ${(result.stderr || result.stdout).trim()}`);
  return result.stdout;
}

function tail(path: string, lines = 8): string {
  if (!existsSync(path)) return '';
  return readFileSync(path, 'utf8').trim().split('\n').slice(-lines).join('\n');
}

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/** Installs slurm-wlm and munge with apt-get when missing; returns apt's error text, or null. */
export function installSlurm(): string | null {
  if (has('slurmctld') && has('slurmd') && has('sbatch') && existsSync('/usr/sbin/munged')) return null;
  const result = spawnSync('sh', ['-c', 'apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq slurm-wlm munge'], { encoding: 'utf8', timeout: 600_000 });
  if (result.status === 0) return null;
  return `apt-get install slurm-wlm munge: exit ${result.status}: ${(result.stderr || result.stdout || result.error?.message || '').trim().split('\n').slice(-3).join(' ')}`;
}

export class OneNodeCluster {
  private controller: ChildProcess | null = null;
  private nodeDaemon: ChildProcess | null = null;
  private mungePid: number | null = null;
  private previousConf: string | null = null;
  private confWritten = false;

  /** `base` is a scratch folder of the test's own, for state, spool and logs. */
  constructor(private readonly base: string) {}

  /** Starts munged, slurmctld and slurmd and waits for the node to be idle; throws with the daemons' own errors. */
  async start(timeoutMs = 30_000): Promise<void> {
    const base = this.base;
    const host = run('hostname', ['-s']).trim();
    const totalMb = Number(/^Mem:\s+(\d+)/m.exec(run('free', ['-m']))?.[1] ?? 2048);
    // leave about 1 GiB to the system, as the notes say
    const memoryMb = Math.max(256, totalMb - 1024);
    for (const folder of ['state', 'spool', 'log']) mkdirSync(join(base, folder), { recursive: true });
    const conf = [
      'ClusterName=local', `SlurmctldHost=${host}`, 'SlurmUser=root', 'AuthType=auth/munge',
      `StateSaveLocation=${base}/state`, `SlurmdSpoolDir=${base}/spool`,
      `SlurmctldPidFile=${base}/slurmctld.pid`, `SlurmdPidFile=${base}/slurmd.pid`,
      `SlurmctldLogFile=${base}/log/slurmctld.log`, `SlurmdLogFile=${base}/log/slurmd.log`,
      'SelectType=select/cons_tres', 'SelectTypeParameters=CR_Core',
      // no cgroup freezer in a sandbox: with cgroup tracking the first job fails and the node drains
      'ProctrackType=proctrack/linuxproc', 'TaskPlugin=task/none',
      'JobAcctGatherType=jobacct_gather/none', 'AccountingStorageType=accounting_storage/none',
      'MpiDefault=none', 'ReturnToService=2', 'MailProg=/bin/true', 'SchedulerParameters=batch_sched_delay=0',
      `NodeName=${host} CPUs=2 Sockets=1 CoresPerSocket=2 ThreadsPerCore=1 RealMemory=${memoryMb} State=UNKNOWN`,
      `PartitionName=debug Nodes=${host} Default=YES MaxTime=INFINITE State=UP`,
    ].join('\n') + '\n';
    this.previousConf = existsSync(SLURM_CONF) ? readFileSync(SLURM_CONF, 'utf8') : null;
    mkdirSync('/etc/slurm', { recursive: true });
    writeFileSync(SLURM_CONF, conf);
    this.confWritten = true;

    mkdirSync('/run/munge', { recursive: true });
    run('chown', ['munge:munge', '/run/munge']);
    const runningMunge = existsSync(MUNGE_PID_FILE) ? Number(readFileSync(MUNGE_PID_FILE, 'utf8').trim()) : 0;
    if (!(runningMunge > 0 && alive(runningMunge))) {
      run('runuser', ['-u', 'munge', '--', '/usr/sbin/munged']);
      this.mungePid = Number(readFileSync(MUNGE_PID_FILE, 'utf8').trim());
    }

    this.controller = this.daemon('slurmctld');
    this.nodeDaemon = this.daemon('slurmd');
    const deadline = Date.now() + timeoutMs;
    let state = '';
    while (Date.now() < deadline) {
      for (const [name, child] of [['slurmctld', this.controller], ['slurmd', this.nodeDaemon]] as const) {
        if (child.exitCode !== null || child.signalCode !== null) throw new Error(`${name} exited (${child.exitCode ?? child.signalCode}): ${this.daemonError(name)}`);
      }
      state = spawnSync('sinfo', ['-h', '-o', '%T'], { encoding: 'utf8' }).stdout?.trim() ?? '';
      if (state === 'idle') return;
      await sleep(200);
    }
    throw new Error(`node not idle after ${timeoutMs / 1000} s (state "${state}"): ${this.daemonError('slurmd')} ${this.daemonError('slurmctld')}`);
  }

  private daemon(name: 'slurmctld' | 'slurmd'): ChildProcess {
    const err = openSync(join(this.base, 'log', `${name}.stderr`), 'w');
    const child = spawn(name, ['-D'], { stdio: ['ignore', 'ignore', err] });
    closeSync(err);
    child.on('error', () => {}); // a missing binary shows as an exit code below
    return child;
  }

  /** The daemon's own last words: its stderr, else its log. */
  daemonError(name: 'slurmctld' | 'slurmd'): string {
    const text = tail(join(this.base, 'log', `${name}.stderr`)) || tail(join(this.base, 'log', `${name}.log`));
    return text.replace(/\s*\n\s*/g, ' | ') || '(no output)';
  }

  /** Submits a batch script with the given environment (sbatch passes it on to the tasks); returns the job id. */
  submit(script: string, workDir: string, env: NodeJS.ProcessEnv): string {
    const path = join(workDir, 'job.sh');
    writeFileSync(path, script, { mode: 0o755 });
    const out = run('sbatch', ['--parsable', `--chdir=${workDir}`, `--output=${workDir}/slurm-%A_%a.out`, path], 30_000, env).trim();
    return out.split(';')[0];
  }

  /** Polls squeue until the job (every task of an array) has left the queue. */
  async waitFor(jobId: string, timeoutMs: number): Promise<void> {
    const deadline = Date.now() + timeoutMs;
    while (Date.now() < deadline) {
      const queued = run('squeue', ['-h', '-j', jobId]).trim();
      if (queued === '') return;
      await sleep(300);
    }
    throw new Error(`job ${jobId} still queued after ${timeoutMs / 1000} s: ${run('squeue', ['-h', '-j', jobId]).trim()}`);
  }

  /** Cancels jobs, stops the daemons started here by their PIDs, and puts slurm.conf back. */
  async stop(): Promise<void> {
    if (this.controller !== null) spawnSync('scancel', ['--user=root'], { stdio: 'ignore', timeout: 10_000 });
    const children = [this.nodeDaemon, this.controller].filter((c): c is ChildProcess => c !== null && c.pid !== undefined);
    for (const child of children) if (alive(child.pid!)) process.kill(child.pid!, 'SIGTERM');
    const deadline = Date.now() + 10_000;
    while (children.some((c) => c.exitCode === null && c.signalCode === null) && Date.now() < deadline) await sleep(100);
    for (const child of children) if (child.exitCode === null && child.signalCode === null) process.kill(child.pid!, 'SIGKILL');
    if (this.mungePid !== null && alive(this.mungePid)) process.kill(this.mungePid, 'SIGTERM');
    this.controller = this.nodeDaemon = null;
    this.mungePid = null;
    if (this.confWritten) {
      if (this.previousConf === null) rmSync(SLURM_CONF, { force: true });
      else writeFileSync(SLURM_CONF, this.previousConf);
      this.confWritten = false;
    }
  }
}

/** The job-array recipe of the README: the sbatch script and the merge line that follows it. */
export function readmeJobArray(readme: string): { script: string; merge: string } {
  const start = readme.indexOf('A job array');
  const block = start < 0 ? null : /```sh\n([\s\S]*?)```/.exec(readme.slice(start));
  if (block === null) throw new Error('README: no ```sh block after "A job array"');
  const [script, merge] = block[1].split(/^# afterwards, once:\n/m);
  if (merge === undefined) throw new Error('README: the job-array block has no "# afterwards, once:" line');
  return { script, merge: merge.trim() };
}

