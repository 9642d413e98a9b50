/** Drives test/helpers/pty-stream.py: a serial radio on a real pseudo-terminal that streams and can be pulled out mid-stream. */
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { createInterface } from 'node:readline';

export interface PtyStream {
  /** Send a command and wait for its one-line answer. */
  command(line: string, timeoutMs?: number): Promise<string>;
  close(): Promise<void>;
}

export function startPtyStream(): PtyStream {
  const child = spawn('python3', [join(import.meta.dirname, 'pty-stream.py')], { stdio: 'pipe' });
  const waiters: Array<(line: string) => void> = [];
  let stderr = '';
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  createInterface({ input: child.stdout }).on('line', (line) => waiters.shift()?.(line));
  return {
    command(line, timeoutMs = 10_000) {
      return new Promise((resolve, reject) => {
        const timer = setTimeout(
          () => reject(new Error(`pty stream helper: no answer to "${line}" (stderr: ${stderr})`)),
          timeoutMs,
        );
        waiters.push((answer) => {
          clearTimeout(timer);
          resolve(answer);
        });
        child.stdin.write(line + '\n');
      });
    },
    async close() {
      if (child.exitCode !== null) return;
      const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
      child.stdin.end('quit\n');
      const timer = setTimeout(() => child.kill('SIGKILL'), 2000);
      await exited;
      clearTimeout(timer);
    },
  };
}
