// npm run fuzz [-- --count N --seed S --bound-ms B --processes P --first-process F --concurrency C --process-bound-ms B]:
// the fuzz campaign (fuzz/campaign.ts) over mutated inputs of every kind the readers take, in
// this process, then P mutated inputs through the commands as child processes
// (fuzz/processes.ts, cases F to F + P - 1, C at a time). Exit 1 on any finding (an exception that is not the
// readers' own, an input over the time bound, a rejection without its byte offset or on more
// than one line; a process crash: stack trace, exit code other than 0/1/2, signal, time bound).

import { formatTally, runCampaign } from './fuzz/campaign.js';
import { formatProcessTally, runProcessCampaign } from './fuzz/processes.js';

function option(name: string, fallback: number): number {
  const at = process.argv.indexOf(`--${name}`);
  if (at < 0) return fallback;
  const value = Number(process.argv[at + 1]);
  if (!Number.isSafeInteger(value) || value < 0) {
    console.error(`fuzz: --${name} must be an integer >= 0, got ${JSON.stringify(process.argv[at + 1])}`);
    process.exit(2);
  }
  return value;
}

const count = option('count', 10000);
const seed = option('seed', 1);
const boundMs = option('bound-ms', 5000);
const processes = option('processes', 200);
const firstProcess = option('first-process', 0);
const concurrency = option('concurrency', 2);
const processBoundMs = option('process-bound-ms', 30000);

let started = performance.now();
const tally = await runCampaign({
  seed,
  count,
  boundMs,
  onCase: (k) => { if ((k + 1) % 10000 === 0) process.stderr.write(`fuzz: ${k + 1} inputs\n`); },
});
process.stdout.write(`fuzz, readers in process: seed ${seed}, ${((performance.now() - started) / 1000).toFixed(1)} s\n` + formatTally(tally));

started = performance.now();
const processTally = await runProcessCampaign({
  seed,
  count: processes,
  first: firstProcess,
  concurrency,
  boundMs: processBoundMs,
  onCase: (done) => { if (done % 100 === 0) process.stderr.write(`fuzz: ${done} processes\n`); },
});
process.stdout.write(`fuzz, commands as processes: seed ${seed}, cases ${firstProcess} to ${firstProcess + processes - 1}, ${concurrency} at a time, `
  + `${((performance.now() - started) / 1000).toFixed(1)} s\n` + formatProcessTally(processTally));
process.exitCode = tally.findings.length > 0 || processTally.findings.length > 0 ? 1 : 0;
