/** Measuring helpers for the benchmarks: child processes with wall time and peak RSS, percentiles. */
import { spawn, spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

export const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));
/** The program as users run it: the bundle (scripts/bundle.mjs). */
export const CLI = fileURLToPath(new URL('../cli/main.js', import.meta.url));
export const RSS_PROBE = fileURLToPath(new URL('./rss-probe.js', import.meta.url));

/**
 * The Node options a script's first line asks for (`#!/usr/bin/env -S node --option …`), so that the benchmarks run
 * the program as its bin does; none for a script without such a line.
 */
export function nodeOptionsOf(script: string): string[] {
  let first: string;
  try {
    first = readFileSync(script, 'latin1').slice(0, 200).split('\n')[0]!;
  } catch {
    return [];
  }
  const m = /^#!\S*env\s+-S\s+node\s+(.*)$/.exec(first);
  return m ? m[1]!.trim().split(/\s+/) : [];
}

export interface ChildRun {
  wallMs: number;
  maxRssMb: number | null;
  /** CPU time of the child (user + system, all its threads), ms; null without the probe. */
  cpuMs: number | null;
  code: number | null;
  stdoutBytes: number;
  stderr: string;
}

/** Whether `taskset` (util-linux) can pin a child to one core here. */
export function canPinToOneCore(): boolean {
  if (process.platform !== 'linux') return false;
  return spawnSync('taskset', ['-c', '0', process.execPath, '-e', '0'], { stdio: 'ignore' }).status === 0;
}

/**
 * Run `node [--import rss-probe] [the script's own options] script args…`, discarding stdout, and measure it. `oneCore`: pinned to core 0
 * with taskset (see canPinToOneCore), so the figure is that of a one-core machine.
 */
export function runNode(
  script: string,
  args: string[],
  options: { probe?: boolean; oneCore?: boolean } = {},
): Promise<ChildRun> {
  return new Promise((resolve, reject) => {
    const nodeArgs = [
      ...(options.probe === false ? [] : ['--import', RSS_PROBE]),
      ...nodeOptionsOf(script),
      script,
      ...args,
    ];
    const start = process.hrtime.bigint();
    const [command, commandArgs] =
      options.oneCore === true ? ['taskset', ['-c', '0', process.execPath, ...nodeArgs]] : [process.execPath, nodeArgs];
    const child = spawn(command, commandArgs, { cwd: REPO_ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdoutBytes = 0;
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => (stdoutBytes += d.length));
    child.stderr.setEncoding('utf8').on('data', (d: string) => {
      stderr += d;
      if (stderr.length > 100_000) stderr = stderr.slice(-50_000);
    });
    child.on('error', reject);
    child.on('close', (code) => {
      const wallMs = Number(process.hrtime.bigint() - start) / 1e6;
      const m = /@@maxrss_kib=(\d+) cpu_us=(\d+)/.exec(stderr);
      resolve({
        wallMs,
        maxRssMb: m ? Number(m[1]) / 1024 : null,
        cpuMs: m ? Number(m[2]) / 1000 : null,
        code,
        stdoutBytes,
        stderr: stderr.replace(/\n?@@maxrss_kib=\d+ cpu_us=\d+\n/, ''),
      });
    });
  });
}

export function percentile(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return NaN;
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i]!;
}

export function median(values: readonly number[]): number {
  return percentile(
    [...values].sort((a, b) => a - b),
    50,
  );
}

export function formatTable(rows: ReadonlyArray<readonly [string, string, string, string]>): string {
  const header = ['measure', 'result', 'target', 'verdict'] as const;
  const all = [header, ...rows];
  const widths = header.map((_, i) => Math.max(...all.map((r) => r[i]!.length)));
  const line = (r: readonly string[]) =>
    r
      .map((c, i) => c.padEnd(widths[i]!))
      .join('  ')
      .trimEnd();
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}
