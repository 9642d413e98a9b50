import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { afterAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { parseFrameLine } from '../../src/decode/frame-line.js';
import { CLI_PATH, REPO_ROOT, runCli } from '../helpers/run-cli.js';
import { DEMO_AIRFRAME_PATH, EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';

const dir = mkdtempSync(join(tmpdir(), 'simulate-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function writePlan(name: string, plan: unknown): string {
  const path = join(dir, name);
  writeFileSync(path, JSON.stringify(plan));
  return path;
}

const shortPlan = writePlan('short.json', {
  start: { alt_m: 120, tas_mps: 18 },
  segments: [
    { type: 'straight', duration_s: 1, label: 'level' },
    { type: 'turn', bank_deg: 40, duration_s: 2, label: 'turn' },
  ],
});

/** Spawn the CLI and hand out its stdout lines as they come. */
function spawnCli(args: string[]): {
  child: ChildProcessWithoutNullStreams;
  nextLine: () => Promise<string>;
  stderr: () => string;
  exit: Promise<number | null>;
} {
  const child = spawn(process.execPath, [CLI_PATH, ...args], {
    cwd: REPO_ROOT,
    env: { ...process.env, NO_COLOR: '1' },
  });
  const lines: string[] = [];
  const waiters: Array<(l: string) => void> = [];
  createInterface({ input: child.stdout }).on('line', (l) => {
    const w = waiters.shift();
    if (w) w(l);
    else lines.push(l);
  });
  let err = '';
  child.stderr.setEncoding('utf8').on('data', (d: string) => (err += d));
  const exit = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
  const timer = setTimeout(() => child.kill('SIGKILL'), 20_000);
  void exit.then(() => clearTimeout(timer));
  return {
    child,
    nextLine: () => (lines.length ? Promise.resolve(lines.shift()!) : new Promise((resolve) => waiters.push(resolve))),
    stderr: () => err,
    exit,
  };
}

describe('turnmargin simulate', () => {
  it('writes the same file for the same seed and a different one for another seed', async () => {
    const a = join(dir, 'a.ndjson');
    const b = join(dir, 'b.ndjson');
    const c = join(dir, 'c.ndjson');
    for (const [out, seed] of [
      [a, '7'],
      [b, '7'],
      [c, '8'],
    ] as const) {
      const r = await runCli([
        'simulate',
        '--aircraft',
        EXAMPLE_AIRFRAME_PATH,
        '--plan',
        shortPlan,
        '--seed',
        seed,
        '--rate',
        '20',
        '--out',
        out,
      ]);
      expect(r.code, r.stderr).toBe(0);
    }
    const textA = readFileSync(a, 'utf8');
    expect(readFileSync(b, 'utf8')).toBe(textA);
    expect(readFileSync(c, 'utf8')).not.toBe(textA);
    const lines = textA.trim().split('\n');
    expect(lines).toHaveLength(61); // 3 s at 20 Hz, both ends included
    for (const line of lines) expect(parseFrameLine(line).ok).toBe(true);
  });

  // The fit example is flown by its own (invented) "as flown" airframe: fit is to find it from the flight.
  for (const [name, aircraftPath] of [
    ['demo-flight', DEMO_AIRFRAME_PATH],
    ['turn-card', DEMO_AIRFRAME_PATH],
    ['fit-flight', join(REPO_ROOT, 'replays/plans/fit-flight-airframe.json')],
  ] as const) {
    it(`regenerates exactly the committed ${name}.ndjson from its plan (replays/README.md)`, async () => {
      const planPath = join(REPO_ROOT, `replays/plans/${name}.json`);
      const r = await runCli([
        'simulate',
        '--aircraft',
        aircraftPath,
        '--plan',
        planPath,
        '--rate',
        '10',
        '--seed',
        '1',
        '--quiet',
      ]);
      expect(r.code, r.stderr).toBe(0);
      expect(r.stdout).toBe(readFileSync(join(REPO_ROOT, `replays/${name}.ndjson`), 'utf8'));
    });
  }

  it('gives a turn card with IAS frames in which review finds the stall caution and warning of the slow turn', async () => {
    const r = await runCli([
      'review',
      join(REPO_ROOT, 'replays/turn-card.ndjson'),
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--format',
      'json',
    ]);
    expect(r.code, r.stderr).toBe(0);
    const review = JSON.parse(r.stdout) as {
      rejected: number;
      events: Array<{ limit: string; level: string; start_s: number; end_s: number }>;
    };
    expect(review.rejected).toBe(0);
    // The slow 1.5 g turn flies from 65.6 to 71.6 s (after a 0.6 s pull-up, so the boundaries are off the 0.1 s grid).
    for (const level of ['caution', 'warning']) {
      const stall = review.events.filter((e) => e.limit === 'stall' && e.level === level);
      expect(stall, level).toHaveLength(1);
      expect(stall[0]!.start_s).toBeGreaterThan(65.5);
      expect(stall[0]!.start_s).toBeLessThan(71.6);
    }
  });

  it('gives a demo flight in which review finds the planted thrust, structure and stall cautions', async () => {
    const r = await runCli([
      'review',
      join(REPO_ROOT, 'replays/demo-flight.ndjson'),
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--format',
      'json',
    ]);
    expect(r.code, r.stderr).toBe(0);
    const review = JSON.parse(r.stdout) as {
      accepted: number;
      rejected: number;
      events: Array<{ limit: string; level: string; start_s: number; end_s: number }>;
    };
    expect(review.rejected).toBe(0);
    const find = (limit: string, level: string) => review.events.filter((e) => e.limit === limit && e.level === level);
    // The plan's segments: the 70° left turn flies from 30 to 36 s, the slow-down and slow flight from 54 to 74 s,
    // the 70° right turn at full throttle from 107 to 114 s (the speed bleeds from 22 to 19 m/s).
    for (const limit of ['thrust', 'structure']) {
      const events = find(limit, 'caution');
      expect(events, limit).toHaveLength(2);
      expect(events[0]!.start_s).toBeGreaterThanOrEqual(30);
      expect(events[0]!.start_s).toBeLessThan(36);
      expect(events[1]!.start_s).toBeGreaterThanOrEqual(107);
      expect(events[1]!.start_s).toBeLessThan(114);
    }
    const stall = find('stall', 'caution');
    expect(stall).toHaveLength(1);
    expect(stall[0]!.start_s).toBeGreaterThanOrEqual(54);
    expect(stall[0]!.end_s).toBeLessThanOrEqual(76);
    expect(review.events.filter((e) => e.level === 'warning')).toEqual([]);
  });

  it('plants a structure caution that review finds with the load factor the plan asked for', async () => {
    // Example airframe: n_limit_pos 3.8, so the structure caution (0.80) comes on at n ≥ 3.04. At 25 m/s sea level
    // n_stall = q·S·CLmax/W = 0.5·1.225·625·0.55·1.2/31.38 = 8.05, so a 3.3 g turn is far from the stall.
    const plan = writePlan('pull.json', {
      start: { alt_m: 0, tas_mps: 25 },
      noise: { nz_sd: 0.01, airspeed_sd_mps: 0.05 },
      segments: [
        { type: 'straight', duration_s: 3, label: 'level' },
        { type: 'turn', load_factor: 3.3, duration_s: 3, label: '3.3 g turn' },
        { type: 'straight', duration_s: 4, tas_mps: 25, label: 'level again' },
      ],
    });
    const out = join(dir, 'pull.ndjson');
    expect(
      (await runCli(['simulate', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--plan', plan, '--out', out, '--quiet'])).code,
    ).toBe(0);
    const r = await runCli(['review', out, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'json']);
    expect(r.code, r.stderr).toBe(0);
    const events = (
      JSON.parse(r.stdout) as { events: Array<{ limit: string; level: string; start_s: number; n_at_peak: number }> }
    ).events;
    const structure = events.filter((e) => e.limit === 'structure' && e.level === 'caution');
    expect(structure).toHaveLength(1);
    expect(structure[0]!.start_s).toBeGreaterThan(3);
    expect(structure[0]!.start_s).toBeLessThan(6);
    expect(Math.abs(structure[0]!.n_at_peak - 3.3)).toBeLessThan(0.05);
    expect(events.some((e) => e.limit === 'structure' && e.level === 'warning')).toBe(false); // 3.3/3.8 = 0.87 < 0.95
  });

  it('refuses to overwrite an existing --out file without --force', async () => {
    const out = join(dir, 'exists.ndjson');
    writeFileSync(out, 'keep me\n');
    const r = await runCli(['simulate', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--plan', shortPlan, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/exists; give --force/);
    expect(readFileSync(out, 'utf8')).toBe('keep me\n');
    const forced = await runCli([
      'simulate',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--plan',
      shortPlan,
      '--out',
      out,
      '--force',
      '--quiet',
    ]);
    expect(forced.code).toBe(0);
    expect(readFileSync(out, 'utf8')).not.toBe('keep me\n');
  });

  it('refuses two outputs at once, and a --serial path that is not a device', async () => {
    const two = await runCli([
      'simulate',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--plan',
      shortPlan,
      '--out',
      join(dir, 'x.ndjson'),
      '--pty',
    ]);
    expect(two.code).toBe(2);
    expect(two.stderr).toMatch(/give one output at most \(got --out and --pty\)/);
    const notDevice = await runCli([
      'simulate',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--plan',
      shortPlan,
      '--serial',
      shortPlan,
      '--quiet',
    ]);
    expect(notDevice.code).toBe(2);
    expect(notDevice.stderr).toMatch(/not a serial device or pseudo-terminal/);
  });

  it('names the bad key of a plan and exits 2', async () => {
    const bad = writePlan('bad.json', {
      start: { alt_m: 100, tas_mps: 18 },
      segments: [{ type: 'turn', bank_deg: 120, duration_s: 5 }],
    });
    const r = await runCli(['simulate', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--plan', bad]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('bad.json: segments[0].bank_deg must be a number from -80 to 80 (got 120)');
    expect(r.stdout).toBe('');
  });

  it('reports a plan the model cannot fly before writing anything', async () => {
    const loop = writePlan('loop.json', {
      start: { alt_m: 100, tas_mps: 20 },
      segments: [{ type: 'pull_up', load_factor: 4, duration_s: 10, label: 'loop' }],
    });
    const out = join(dir, 'loop.ndjson');
    const r = await runCli(['simulate', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--plan', loop, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/segment "loop"; the point-mass model cannot go on/);
    expect(() => readFileSync(out)).toThrow();
  });

  it('refuses a malformed --udp or --ws-listen address before it flies the plan (no flight summary first)', async () => {
    const cases: Array<[string[], RegExp]> = [
      [['--udp', '5000'], /--udp must be HOST:PORT/],
      [['--udp', '127.0.0.1:0'], /--udp needs the port the receiver listens on/],
      [['--ws-listen', 'abc'], /--ws-listen must be HOST:PORT/],
      [['--ws-listen', '0.0.0.0:0'], /not a loopback address; give --allow-remote/],
    ];
    for (const [option, message] of cases) {
      const r = await runCli(['simulate', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--plan', shortPlan, ...option]);
      expect(r.code, option.join(' ')).toBe(2);
      expect(r.stderr).toMatch(message);
      expect(r.stderr).not.toMatch(/simulated "/);
    }
  });

  it('states in --help what the model ignores', async () => {
    const r = await runCli(['simulate', '--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/The model ignores:/);
    expect(r.stdout).toMatch(/--rate HZ/);
    expect(r.stdout).toMatch(/--ws-listen HOST:PORT/);
  });

  it('streams the whole flight to a websocket client, the same frames as the file', async () => {
    const file = join(dir, 'ws-ref.ndjson');
    expect(
      (await runCli(['simulate', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--plan', shortPlan, '--out', file, '--quiet']))
        .code,
    ).toBe(0);
    const sim = spawnCli([
      'simulate',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--plan',
      shortPlan,
      '--ws-listen',
      '127.0.0.1:0',
      '--speed',
      '20',
      '--quiet',
    ]);
    const first = await sim.nextLine();
    const url = /^listening on (ws:\/\/127\.0\.0\.1:\d+)$/.exec(first)?.[1];
    expect(url, first).toBeDefined();
    const ws = new WebSocket(url!);
    const received: string[] = [];
    ws.on('message', (d) => received.push(String(d).trimEnd()));
    const closeCode = await new Promise<number>((resolve) => ws.on('close', (code) => resolve(code)));
    expect(closeCode).toBe(1000);
    expect(await sim.exit).toBe(0);
    expect(received).toEqual(readFileSync(file, 'utf8').trim().split('\n'));
  });

  it('streams live frames to an existing serial line (--serial PATH): the far end receives the whole flight', async () => {
    const file = join(dir, 'serial-ref.ndjson');
    expect(
      (await runCli(['simulate', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--plan', shortPlan, '--out', file, '--quiet']))
        .code,
    ).toBe(0);
    const expected = readFileSync(file, 'utf8').trim().split('\n');
    // The far end of the line: a python3 pseudo-terminal pair whose master side is copied to stdout.
    const far = spawn('python3', [
      '-c',
      [
        'import os, pty, sys, tty',
        'm, s = pty.openpty()',
        'tty.setraw(s)',
        'print(os.ttyname(s), flush=True)',
        'while True:',
        '    d = os.read(m, 65536)',
        '    sys.stdout.buffer.write(d)',
        '    sys.stdout.flush()',
      ].join('\n'),
    ]);
    try {
      const received: string[] = [];
      let resolveAll!: () => void;
      const all = new Promise<void>((resolve) => (resolveAll = resolve));
      let path: string | undefined;
      let resolvePath!: (p: string) => void;
      const pathKnown = new Promise<string>((resolve) => (resolvePath = resolve));
      createInterface({ input: far.stdout }).on('line', (l) => {
        if (path === undefined) {
          path = l.trim();
          resolvePath(path);
          return;
        }
        received.push(l.replace(/\r$/, ''));
        if (received.length === expected.length) resolveAll();
      });
      const r = await runCli([
        'simulate',
        '--aircraft',
        EXAMPLE_AIRFRAME_PATH,
        '--plan',
        shortPlan,
        '--serial',
        await pathKnown,
        '--speed',
        '20',
        '--quiet',
      ]);
      expect(r.code, r.stderr).toBe(0);
      await all;
      expect(received).toEqual(expected);
    } finally {
      far.kill('SIGKILL');
    }
  });

  it('streams live frames on a pseudo-terminal a serial reader can open', async () => {
    const sim = spawnCli([
      'simulate',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--plan',
      shortPlan,
      '--pty',
      '--rate',
      '50',
      '--loop',
      '--quiet',
    ]);
    const first = await sim.nextLine();
    const path = /^pseudo-terminal (\S+)$/.exec(first)?.[1];
    expect(path, first + sim.stderr()).toBeDefined();
    const { SerialPort, ReadlineParser } = await import('serialport');
    const port = new SerialPort({ path: path!, baudRate: 57600 });
    const lines: string[] = [];
    await new Promise<void>((resolve, reject) => {
      port.on('error', reject);
      port.pipe(new ReadlineParser({ delimiter: '\n' })).on('data', (l: string) => {
        lines.push(l);
        if (lines.length === 30) resolve();
      });
    });
    await new Promise<void>((resolve) => port.close(() => resolve()));
    sim.child.kill('SIGINT');
    expect(await sim.exit).toBe(0);
    // The first line may be a tail of an older one dropped while nobody read; all the rest are whole frames.
    const frames = lines.slice(1).map((l) => parseFrameLine(l));
    for (const f of frames) expect(f.ok).toBe(true);
    const times = frames.map((f) => (f.ok ? f.frame.tS : NaN));
    for (let i = 1; i < times.length; i++) expect(times[i]!).toBeGreaterThan(times[i - 1]!);
  });
});
