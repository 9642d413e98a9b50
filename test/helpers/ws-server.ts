/** Runs test/helpers/ws-frame-server.mjs in a child process so that a test can kill the relay outright (SIGKILL). */
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { createInterface } from 'node:readline';

export interface FrameServer {
  port: number;
  /** Resolves with the next output line matching `pattern`. */
  waitFor(pattern: RegExp, timeoutMs?: number): Promise<string>;
  send(command: string): void;
  kill(): Promise<void>;
}

export async function startFrameServer(port = 0): Promise<FrameServer> {
  const child = spawn(process.execPath, [join(import.meta.dirname, 'ws-frame-server.mjs'), String(port)], {
    stdio: 'pipe',
  });
  const seen: string[] = [];
  const waiters: Array<{ pattern: RegExp; resolve: (l: string) => void }> = [];
  let stderr = '';
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  createInterface({ input: child.stdout }).on('line', (line) => {
    const i = waiters.findIndex((w) => w.pattern.test(line));
    if (i >= 0) waiters.splice(i, 1)[0]!.resolve(line);
    else seen.push(line);
  });
  const waitFor = (pattern: RegExp, timeoutMs = 10_000): Promise<string> => {
    const j = seen.findIndex((l) => pattern.test(l));
    if (j >= 0) return Promise.resolve(seen.splice(j, 1)[0]!);
    return new Promise((resolve, reject) => {
      const timer = setTimeout(
        () => reject(new Error(`ws server: no line matching ${pattern} (stderr: ${stderr})`)),
        timeoutMs,
      );
      waiters.push({
        pattern,
        resolve: (l) => {
          clearTimeout(timer);
          resolve(l);
        },
      });
    });
  };
  const listening = await waitFor(/^listening \d+/);
  return {
    port: Number(listening.split(' ')[1]),
    waitFor,
    send: (command) => child.stdin.write(command + '\n'),
    kill: () =>
      new Promise<void>((resolve) => {
        if (child.exitCode !== null || child.signalCode !== null) return resolve();
        child.once('exit', () => resolve());
        child.kill('SIGKILL');
      }),
  };
}
