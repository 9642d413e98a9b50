/** Spawn the built CLI (dist/, built by `npm test` before vitest runs) and collect its output. */
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';

export const CLI_PATH = fileURLToPath(new URL('../../dist/src/cli/main.js', import.meta.url));
export const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));

export interface CliResult {
  code: number | null;
  stdout: string;
  stderr: string;
}

export function runCli(
  args: string[],
  options: { input?: string; timeoutMs?: number; env?: NodeJS.ProcessEnv; script?: string } = {},
): Promise<CliResult> {
  return new Promise((resolve, reject) => {
    // `script`: another build of the program (the bundle); the modules of dist/src by default.
    const child = spawn(process.execPath, [options.script ?? CLI_PATH, ...args], {
      cwd: REPO_ROOT,
      env: { ...process.env, NO_COLOR: '1', ...options.env },
      stdio: ['pipe', 'pipe', 'pipe'],
    });
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const timer = setTimeout(() => child.kill('SIGKILL'), options.timeoutMs ?? 20_000);
    child.on('error', reject);
    child.on('close', (code) => {
      clearTimeout(timer);
      resolve({ code, stdout, stderr });
    });
    child.stdin.end(options.input ?? '');
  });
}
