/**
 * The program users run (`bin`: dist/cli/main.js, scripts/bundle.mjs) is the bundle of the modules the other tests
 * run (dist/src). These checks hold the two to the same answers on the paths where bundling could differ: the
 * review in this thread, alongside a worker and in a worker per file (the worker script found next to the bundle),
 * the lazily loaded report code, the version read from package.json and the exit codes.
 */
import { execFile } from 'node:child_process';
import { accessSync, constants as fsConstants, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { DEMO_AIRFRAME_PATH } from '../helpers/airframes.js';
import { CLI_PATH, REPO_ROOT, runCli, type CliResult } from '../helpers/run-cli.js';

const BUNDLE_PATH = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));
const DEMO_FLIGHT = join(REPO_ROOT, 'replays/demo-flight.ndjson');
const CARD_FLIGHT = join(REPO_ROOT, 'replays/turn-card.ndjson');

function run(script: string, args: string[], env: NodeJS.ProcessEnv = {}): Promise<CliResult> {
  return runCli(args, { script, env, timeoutMs: 30_000 });
}

/** Both programs' answers to the same command line. */
async function both(args: string[], env: NodeJS.ProcessEnv = {}): Promise<[CliResult, CliResult]> {
  return Promise.all([run(BUNDLE_PATH, args, env), run(CLI_PATH, args, env)]);
}

// Every file goes through a worker (the threshold is in bytes).
const THROUGH_WORKER = { TURNMARGIN_REVIEW_WORKER_MIN_BYTES: '0' };

describe('the bundled program (bin) answers as the modules do', () => {
  it('prints the same review of one flight, read in this thread and alongside a worker', async () => {
    const args = ['review', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json'];
    for (const env of [{}, THROUGH_WORKER]) {
      const [bundled, modules] = await both(args, env);
      expect(bundled.code).toBe(0);
      expect(bundled.stdout).toBe(modules.stdout);
      expect(JSON.parse(bundled.stdout).accepted).toBeGreaterThan(0);
    }
  });

  it('prints the same review of two flights, each in a worker of its own', async () => {
    const args = ['review', DEMO_FLIGHT, CARD_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json'];
    const [bundled, modules] = await both(args, THROUGH_WORKER);
    expect(bundled.code).toBe(0);
    expect(bundled.stderr).not.toMatch(/worker/);
    expect(bundled.stdout).toBe(modules.stdout);
  });

  it('writes the HTML report and the per-frame records as the modules do (code loaded on demand)', async () => {
    // The same file names in two folders: the report shows its command line.
    const dirs: Record<string, string> = {
      b: mkdtempSync(join(tmpdir(), 'turnmargin-bundle-')),
      m: mkdtempSync(join(tmpdir(), 'turnmargin-bundle-')),
    };
    const outputs = (who: string) => [join(dirs[who]!, 'report.html'), join(dirs[who]!, 'records.ndjson')] as const;
    const argsFor = (who: string) => [
      'review',
      DEMO_FLIGHT,
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--format',
      'html',
      '--out',
      outputs(who)[0],
    ];
    const [bundled, modules] = await Promise.all([run(BUNDLE_PATH, argsFor('b')), run(CLI_PATH, argsFor('m'))]);
    expect([bundled.code, modules.code]).toEqual([0, 0]);
    expect(readFileSync(outputs('b')[0], 'utf8')).toBe(readFileSync(outputs('m')[0], 'utf8'));
    const perFrame = (who: string) =>
      run(who === 'b' ? BUNDLE_PATH : CLI_PATH, [
        'review',
        DEMO_FLIGHT,
        '--aircraft',
        DEMO_AIRFRAME_PATH,
        '--per-frame',
        outputs(who)[1],
      ]);
    const [b, m] = await Promise.all([perFrame('b'), perFrame('m')]);
    expect([b.code, m.code]).toEqual([0, 0]);
    expect(readFileSync(outputs('b')[1], 'utf8')).toBe(readFileSync(outputs('m')[1], 'utf8'));
  });

  it('reads its version from package.json and keeps the exit codes of usage errors', async () => {
    const version = JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8')).version as string;
    const [v] = await both(['--version']);
    expect(v.code).toBe(0);
    expect(v.stdout.trim()).toBe(`turnmargin ${version}`);
    const [bundled, modules] = await both(['review', DEMO_FLIGHT]);
    expect(bundled.code).toBe(2);
    expect(bundled.stderr).toBe(modules.stderr);
  });

  it('words the problems of an invalid airframe file as the modules do (the schema library bundled)', async () => {
    const path = join(mkdtempSync(join(tmpdir(), 'turnmargin-bundle-')), 'bad-airframe.json');
    const bad = { name: 'x', mass_kg: 'heavy', polar: { cd0: 'a', k: [1] }, thrust: { model: 'rocket' }, extra: 1 };
    writeFileSync(path, JSON.stringify(bad));
    const [bundled, modules] = await both(['envelope', '--aircraft', path]);
    expect(bundled.code).toBe(2);
    expect(bundled.stderr).toMatch(/mass_kg/);
    expect(bundled.stderr).toMatch(/extra is not a known key/);
    expect(bundled.stderr).toBe(modules.stderr);
  });

  it('prints the demo pass as the modules do (the replay and live pipeline, without a terminal)', async () => {
    const [bundled, modules] = await both(['demo', '--no-ui']);
    expect(bundled.code).toBe(0);
    expect(bundled.stdout.split('\n').length).toBeGreaterThan(100);
    expect(bundled.stdout).toBe(modules.stdout);
  });

  it('runs by its own first line, as an installed bin does, with the Node options that line gives', async () => {
    // The options are the ones the benchmarks run it with (bench/measure.ts reads the same line).
    expect(readFileSync(BUNDLE_PATH, 'utf8').split('\n')[0]).toBe(
      '#!/usr/bin/env -S node --no-concurrent-recompilation',
    );
    accessSync(BUNDLE_PATH, fsConstants.X_OK);
    const args = ['review', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json'];
    const direct = await new Promise<{ code: number; stdout: string }>((resolve) =>
      execFile(BUNDLE_PATH, args, { cwd: REPO_ROOT, timeout: 30_000 }, (err, stdout) =>
        resolve({ code: err ? Number((err as { code?: number }).code ?? 1) : 0, stdout }),
      ),
    );
    const [, modules] = await both(args);
    expect(direct.code).toBe(0);
    expect(direct.stdout).toBe(modules.stdout);
  });
});
