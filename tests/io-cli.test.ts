// import and export as users meet them: subprocesses of the compiled CLI (npm test builds it).
import { spawnSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { tempDirForSuite } from './support/temp-dir.js';

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const directory = tempDirForSuite('io-cli');

function jetlag(args: string[], input?: Buffer | string) {
  const result = spawnSync(process.execPath, [cli, ...args], { cwd: directory, input });
  return { code: result.status, stdout: result.stdout, stderr: result.stderr.toString('utf8') };
}

const CSV = 'event,ieta,iphi,et\n0,3,4,1.25\n0,3,5,0.5\n1,7,7,2\n';

describe('jetlag import and export on the command line', () => {
  it('pipe CSV -> event file -> JSON lines through stdin and stdout, exit 0', () => {
    const imported = jetlag(['import', '--csv', '-', '--out', '-', '--gzip', '-q'], CSV);
    expect(imported.code).toBe(0);
    expect(imported.stderr).toBe('');
    const exported = jetlag(['export', '-', '--format', 'jsonl', '-q'], imported.stdout);
    expect(exported.code).toBe(0);
    expect(exported.stdout.toString('utf8')).toBe('{"event":0,"towers":[[3,4,1.25],[3,5,0.5]]}\n{"event":1,"towers":[[7,7,2]]}\n');
  });

  it('a CSV without its header exits 2 with one line naming file and byte', () => {
    writeFileSync(join(directory, 'no-header.csv'), '0,1,2,3\n');
    const result = jetlag(['import', '--csv', 'no-header.csv', '--out', 'x.pb']);
    expect(result.code).toBe(2);
    expect(result.stderr).toBe('jetlag import: no-header.csv, line 1, byte 0: missing header: expected "event,ieta,iphi,et", got "0,1,2,3"\n');
  });

  it('a truncated event file exits 2 with one error line after the events before it', () => {
    writeFileSync(join(directory, 'towers.csv'), CSV);
    expect(jetlag(['import', '--csv', 'towers.csv', '--out', 'events.pb', '-q']).code).toBe(0);
    const bytes = readFileSync(join(directory, 'events.pb'));
    writeFileSync(join(directory, 'cut.pb'), bytes.subarray(0, bytes.length - 1));
    const result = jetlag(['export', 'cut.pb', '-q']);
    expect(result.code).toBe(2);
    expect(result.stdout.toString('utf8')).toBe('event,ieta,iphi,et\n0,3,4,1.25\n0,3,5,0.5\n');
    expect(result.stderr.trim().split('\n')).toHaveLength(1);
    expect(result.stderr).toMatch(/^jetlag export: cut\.pb, event 1, byte \d+: truncated record: length \d+ but only \d+ bytes follow; 1 record before it written to <stdout>\n$/);
  });

  it('readRecords reads stdin for -', () => {
    const reader = join(import.meta.dirname, '..', 'dist', 'host', 'input', 'record-reader.js');
    const script = `import { readRecords } from ${JSON.stringify(reader)};\n` +
      'const sizes = []; for await (const r of readRecords("-")) sizes.push(r.bytes.length + "@" + r.offset); console.log(sizes.join(" "));';
    const input = Buffer.from([3, 1, 2, 3, 0, 1, 9]);
    const result = spawnSync(process.execPath, ['--input-type=module', '-e', script], { input });
    expect(result.stderr.toString()).toBe('');
    expect(result.stdout.toString()).toBe('3@0 0@4 1@5\n');
  });

  it('a missing required option exits 2 with one usage line', () => {
    const result = jetlag(['import', '--out', 'x.pb']);
    expect(result.code).toBe(2);
    expect(result.stderr).toBe('jetlag import: --csv <file> is required\n');
  });
});
