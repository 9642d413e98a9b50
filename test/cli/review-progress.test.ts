import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pty from 'node-pty';
import { beforeAll, describe, expect, it } from 'vitest';
import { EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';
import { CLI_PATH, REPO_ROOT, runCli } from '../helpers/run-cli.js';

// A long invented flight (10 min at 100 frames/s, a steady 20° turn at 14 m/s), about 5 MiB.
let bigFile = '';
beforeAll(() => {
  const dir = mkdtempSync(join(tmpdir(), 'turnmargin-progress-'));
  bigFile = join(dir, 'long-flight.ndjson');
  const lines: string[] = [];
  for (let i = 0; i < 60_000; i++) {
    lines.push(
      JSON.stringify({
        t_s: i / 100,
        tas_mps: 14,
        alt_m: 100,
        bank_deg: 20,
        nz: 1.06,
        note: 'invented long test flight',
      }),
    );
  }
  writeFileSync(bigFile, lines.join('\n') + '\n');
});

function runInPty(args: string[]): Promise<{ output: string; code: number }> {
  return new Promise((resolve) => {
    const child = pty.spawn(process.execPath, [CLI_PATH, ...args], {
      cols: 100,
      rows: 30,
      cwd: REPO_ROOT,
      env: { ...process.env, NO_COLOR: '1' },
    });
    let output = '';
    child.onData((d) => (output += d));
    child.onExit(({ exitCode }) => resolve({ output, code: exitCode }));
  });
}

describe('progress while reading a long file', () => {
  it('shows a progress line on stderr when it is a terminal, and clears it before the summary', async () => {
    const r = await runInPty(['check', bigFile, '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(r.code).toBe(0);
    expect(r.output).toMatch(/\rreading long-flight\.ndjson: +\d+ % \(\d+\.\d of \d+\.\d MiB\)/);
    expect(r.output).toContain('\r\x1b[2K');
    expect(r.output).toContain('lines 60000: 60000 accepted, 0 rejected');
  });

  it('shows one progress line over several files, with how many are done', async () => {
    const r = await runInPty(['check', bigFile, bigFile, '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(r.code).toBe(0);
    expect(r.output).toMatch(/\rreviewing 2 files: +\d+ % \(\d+\.\d of \d+\.\d MiB\), [012] of 2 done/);
    expect(r.output).toContain('reviewing 2 files: 100 % (');
    expect(r.output).toContain('\r\x1b[2K');
    expect(r.output).toContain('ALL PASS: no event reached warning in 2 flights');
  });

  it('keeps stderr quiet when it is not a terminal', async () => {
    const r = await runCli(['check', bigFile, '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe('');
  });
});
