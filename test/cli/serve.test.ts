import { spawn } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { afterAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { CLI_PATH, REPO_ROOT, runCli } from '../helpers/run-cli.js';
import { EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';

const dir = mkdtempSync(join(tmpdir(), 'serve-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Start `serve` and wait for its "listening on" line. */
async function startServe(extra: string[]) {
  const child = spawn(
    process.execPath,
    [CLI_PATH, 'serve', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--listen', '127.0.0.1:0', ...extra],
    {
      cwd: REPO_ROOT,
      env: { ...process.env, NO_COLOR: '1' },
    },
  );
  let stderr = '';
  child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
  const exit = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
  const timer = setTimeout(() => child.kill('SIGKILL'), 20_000);
  void exit.then(() => clearTimeout(timer));
  const first = await new Promise<string>((resolve) => createInterface({ input: child.stdout }).once('line', resolve));
  return { child, first, exit, stderr: () => stderr };
}

function ask(
  url: string,
  message: string,
  headers: Record<string, string> = {},
): Promise<{ answer: Record<string, unknown>; ws: WebSocket }> {
  return new Promise((resolve, reject) => {
    const ws = new WebSocket(url, { headers });
    ws.once('unexpected-response', (_req, res) => reject(new Error(`HTTP ${res.statusCode}`)));
    ws.once('error', reject);
    ws.once('open', () => ws.send(message));
    ws.once('message', (d) => resolve({ answer: JSON.parse(String(d)) as Record<string, unknown>, ws }));
  });
}

describe('turnmargin serve', () => {
  it('prints the real port, answers, and on SIGTERM closes clients (1001), flushes the recording and exits 0', async () => {
    const recordDir = join(dir, 'rec');
    const server = await startServe(['--token', 'bench', '--record', recordDir]);
    const url = /^listening on (ws:\/\/127\.0\.0\.1:(\d+))$/.exec(server.first);
    expect(url, server.first).not.toBeNull();
    expect(Number(url![2])).toBeGreaterThan(0);
    await expect(ask(url![1]!, '{}')).rejects.toThrow('HTTP 401');
    const line = '{"t_s":1,"tas_mps":20,"alt_m":0,"bank_deg":60}';
    const { answer, ws } = await ask(url![1]!, line, { Authorization: 'Bearer bench' });
    // A 60° level turn: n = 1/cos 60° = 2 (FAA-H-8083-25 load-factor chart), smoothing starts at the raw value.
    expect(answer['n_measured']).toBeCloseTo(2, 9);
    expect(answer['level']).toBe('normal');
    const closed = new Promise<number>((resolve) => ws.once('close', (code) => resolve(code)));
    server.child.kill('SIGTERM');
    expect(await closed).toBe(1001);
    expect(await server.exit).toBe(0);
    expect(server.stderr()).toMatch(/1 connections, 1 frames answered, 0 errors, 1 refused/);
    const files = readdirSync(recordDir);
    expect(files).toHaveLength(1);
    expect(readFileSync(join(recordDir, files[0]!), 'utf8')).toContain(`\t${line}\n`);
  });

  it('reads the token from --token-file', async () => {
    const tokenFile = join(dir, 'token.txt');
    writeFileSync(tokenFile, 'from-file\n');
    const server = await startServe(['--token-file', tokenFile]);
    const url = server.first.replace('listening on ', '');
    await expect(ask(`${url}/?token=wrong`, '{}')).rejects.toThrow('HTTP 401');
    const { answer, ws } = await ask(`${url}/?token=from-file`, '{"t_s":0,"tas_mps":18,"alt_m":0,"nz":1}');
    expect(answer['n_measured']).toBe(1);
    ws.close();
    server.child.kill('SIGTERM');
    expect(await server.exit).toBe(0);
  });

  it('ends cleanly on SIGINT with no client', async () => {
    const server = await startServe([]);
    expect(server.first).toMatch(/^listening on ws:\/\/127\.0\.0\.1:\d+$/);
    server.child.kill('SIGINT');
    expect(await server.exit).toBe(0);
  });

  it('refuses a non-loopback address without --allow-remote, before listening', async () => {
    const r = await runCli(['serve', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--listen', '0.0.0.0:0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/0\.0\.0\.0 is not a loopback address; give --allow-remote/);
    expect(r.stdout).toBe('');
  });

  it('refuses a --record path that is not a directory, before listening', async () => {
    const file = join(dir, 'plain-file');
    writeFileSync(file, '');
    const r = await runCli(['serve', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--listen', '127.0.0.1:0', '--record', file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(`--record ${file}: cannot use it for recordings (not a directory)`);
    expect(r.stdout).toBe('');
  });

  it('names a bad --listen value', async () => {
    const r = await runCli(['serve', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--listen', 'localhost']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--listen must be HOST:PORT/);
  });
});
