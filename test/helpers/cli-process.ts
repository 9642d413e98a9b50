/** The built CLI as a long-running child process (watch, serve…), with its output kept and timed as it arrives. */
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { CLI_PATH, REPO_ROOT } from './run-cli.js';

export interface CliProcess {
  child: ChildProcessWithoutNullStreams;
  /** Resolves when the process has exited and its output is closed. */
  done: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  stdout(): string;
  stderr(): string;
  /** Complete stdout lines that had arrived by `atMs` (Date.now() clock). */
  stdoutLinesBy(atMs: number): number;
}

export function startCliProcess(args: string[], env: NodeJS.ProcessEnv = {}): CliProcess {
  const child = spawn(process.execPath, [CLI_PATH, ...args], {
    cwd: REPO_ROOT,
    stdio: 'pipe',
    env: { ...process.env, NO_COLOR: '1', ...env },
  });
  let stdout = '';
  let stderr = '';
  // (arrival time, complete lines so far) after each chunk.
  const arrivals: Array<[number, number]> = [];
  let lines = 0;
  child.stdout.setEncoding('utf8').on('data', (d: string) => {
    stdout += d;
    for (let i = d.indexOf('\n'); i >= 0; i = d.indexOf('\n', i + 1)) lines += 1;
    arrivals.push([Date.now(), lines]);
  });
  child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
  const done = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) =>
    child.on('close', (code, signal) => resolve({ code, signal })),
  );
  return {
    child,
    done,
    stdout: () => stdout,
    stderr: () => stderr,
    stdoutLinesBy(atMs) {
      let count = 0;
      for (const [t, n] of arrivals) {
        if (t > atMs) break;
        count = n;
      }
      return count;
    },
  };
}
