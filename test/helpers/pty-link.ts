/** Drives test/helpers/pty-link.py: a serial line on a real pseudo-terminal that can be unplugged and plugged back. */
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { join } from 'node:path';
import { createInterface } from 'node:readline';

export interface PtyLink {
  /** Send a command and wait for its one-line answer. */
  command(line: string, timeoutMs?: number): Promise<string>;
  close(): Promise<void>;
}

export function startPtyLink(): PtyLink {
  const child: ChildProcessWithoutNullStreams = spawn('python3', [join(import.meta.dirname, 'pty-link.py')], {
    stdio: 'pipe',
  });
  const answers: string[] = [];
  const waiters: Array<(line: string) => void> = [];
  let stderr = '';
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  createInterface({ input: child.stdout }).on('line', (line) => {
    const w = waiters.shift();
    if (w) w(line);
    else answers.push(line);
  });
  return {
    command(line, timeoutMs = 10_000) {
      child.stdin.write(line + '\n');
      const ready = answers.shift();
      if (ready !== undefined) return Promise.resolve(ready);
      return new Promise((resolve, reject) => {
        const timer = setTimeout(
          () => reject(new Error(`pty helper: no answer to "${line}" (stderr: ${stderr})`)),
          timeoutMs,
        );
        waiters.push((answer) => {
          clearTimeout(timer);
          resolve(answer);
        });
      });
    },
    async close() {
      if (child.exitCode !== null) return;
      child.stdin.end('quit\n');
      await new Promise<void>((resolve) => {
        const timer = setTimeout(() => {
          child.kill('SIGKILL');
          resolve();
        }, 2000);
        child.once('exit', () => {
          clearTimeout(timer);
          resolve();
        });
      });
    },
  };
}
