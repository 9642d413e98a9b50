import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { encodeHeader, encodeLine, encodeLinkEvent } from '../../src/recording/format.js';
import { checkXml } from '../report/xml-check.js';
import { airframe, DEMO_AIRFRAME_PATH } from '../helpers/airframes.js';
import { DEMO_LIKE_NOISE, fitPlanJson, ndjson, simulateFrames, variantAirframeJson } from '../helpers/fit-flights.js';
import { REPO_ROOT, runCli } from '../helpers/run-cli.js';

// The flights here are simulated (invented plans, the invented demo airframe and variants of it); the checks of the
// fit's accuracy against the simulator's truth live in test/core/fit-flights.test.ts. These check the command: the
// readers, the outputs, the refusals.
const FIT_FLIGHT = join(REPO_ROOT, 'replays/fit-flight.ndjson');
const AS_FLOWN = join(REPO_ROOT, 'replays/plans/fit-flight-airframe.json');

function tmp(): string {
  return mkdtempSync(join(tmpdir(), 'turnmargin-fit-'));
}

interface Estimate {
  value: number;
  ci95: [number, number];
}
interface FitJson {
  files: string[];
  frames: { total: number; usable: number; idle: number; full: number; without_throttle: number };
  polar: null | { cd0: Estimate; k: Estimate; r2: number; cl2_range: [number, number]; samples: number };
  polar_reason?: string;
  thrust_scale: null | (Estimate & { samples: number; polar: 'fitted' | 'file' });
  cl_demonstrated: number | null;
  airframe: { cd0: number; k: number; cl_max: number };
  conditions: { altitude_m: number; isa_deviation_c: number; mass_kg: number };
  envelope: { file: Record<string, unknown>; fitted: Record<string, unknown> };
  warnings: string[];
}

/** A noisy flight of the demo airframe with 20 % more drag and 10 % less thrust, as an NDJSON file. */
function variantFlight(dir: string, name = 'variant.ndjson', seed = 2): string {
  const path = join(dir, name);
  writeFileSync(
    path,
    ndjson(simulateFrames(airframe(variantAirframeJson(1.2, 0.9)), fitPlanJson(DEMO_LIKE_NOISE), seed)),
  );
  return path;
}

async function fitJson(args: string[]): Promise<FitJson> {
  const r = await runCli(['fit', ...args, '--format', 'json']);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.stdout) as FitJson;
}

describe('turnmargin fit', () => {
  it('lists its options with units and defaults, and is listed by turnmargin --help', async () => {
    const help = await runCli(['fit', '--help']);
    expect(help.code).toBe(0);
    for (const option of [
      '--aircraft FILE',
      '--mapping FILE',
      '--rate-window S',
      '--format FORMAT',
      '--plot OUT.svg',
      '--write-airframe OUT.json',
      '--force',
    ])
      expect(help.stdout).toContain(option);
    expect(help.stdout).toMatch(/--rate-window S .*\(unit: s; default: 1\)/);
    expect(help.stdout).toMatch(/--format FORMAT .*\(default: md\)/);
    expect(help.stdout).toMatch(/power-off glides .* between 1\.3 and 2 Vs1/);
    expect(help.stdout).toContain('Advisory only');
    const main = await runCli(['--help']);
    expect(main.stdout).toMatch(/^ {2}fit +estimate the drag polar/m);
  });

  it('finds the bundled example flight draggier and less powerful than the demo airframe, in the contract keys', async () => {
    // replays/fit-flight.ndjson was simulated with replays/plans/fit-flight-airframe.json: CD0 0.04 (the file says
    // 0.032), k the same, thrust 0.9 × the file's.
    const out = await fitJson([FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH]);
    const asFlown = airframe(JSON.parse(readFileSync(AS_FLOWN, 'utf8')));
    expect(Object.keys(out)).toEqual(
      expect.arrayContaining([
        'files',
        'frames',
        'polar',
        'thrust_scale',
        'cl_demonstrated',
        'airframe',
        'envelope',
        'warnings',
      ]),
    );
    expect(out.files).toEqual([FIT_FLIGHT]);
    expect(out.frames.total).toBe(1681);
    expect(out.frames.without_throttle).toBe(0);
    expect(out.frames.usable).toBe(out.frames.idle + out.frames.full);
    expect(out.polar).not.toBeNull();
    expect(out).not.toHaveProperty('polar_reason');
    expect(out.polar!.cd0.ci95[0]).toBeLessThan(asFlown.cd0);
    expect(out.polar!.cd0.ci95[1]).toBeGreaterThan(asFlown.cd0);
    expect(Math.abs(out.polar!.k.value / asFlown.k - 1)).toBeLessThan(0.1);
    expect(out.polar!.samples).toBeGreaterThanOrEqual(30);
    expect(out.polar!.cl2_range[1] - out.polar!.cl2_range[0]).toBeGreaterThanOrEqual(0.15);
    expect(Math.abs(out.thrust_scale!.value - 0.9)).toBeLessThan(0.03);
    // The drag the thrust was measured against came from the polar fitted from the same flight.
    expect(out.thrust_scale!.polar).toBe('fitted');
    expect(out.airframe).toEqual({ cd0: 0.032, k: expect.closeTo(1 / (Math.PI * 0.8 * 8.5), 5), cl_max: 1.25 });
    expect(out.cl_demonstrated).toBeGreaterThan(0.5);
    expect(out.cl_demonstrated).toBeLessThan(1.25);
    for (const side of [out.envelope.file, out.envelope.fitted])
      expect(Object.keys(side)).toEqual([
        'stall_speed_mps',
        'corner_speed_mps',
        'max_sustained',
        'max_sustained_turn_rate',
        'min_sustained_radius',
      ]);
    expect(JSON.stringify(out)).not.toMatch(/NaN|Infinity/);
  });

  it("README's worked example is the output of the built command on the bundled flight", async () => {
    const dir = tmp();
    const readme = readFileSync(join(REPO_ROOT, 'README.md'), 'utf8');
    const start = readme.indexOf('```md\n# Model fit');
    expect(start, 'README has the worked example').toBeGreaterThan(0);
    const pasted = readme.slice(start + '```md\n'.length, readme.indexOf('\n```', start + 6) + 1);
    const r = await runCli([
      'fit',
      'replays/fit-flight.ndjson',
      '--aircraft',
      'replays/demo-airframe.json',
      '--plot',
      join(dir, 'fit-flight.svg'),
      '--write-airframe',
      join(dir, 'fitted-airframe.json'),
    ]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout.split(join(dir, 'fitted-airframe.json')).join('fitted-airframe.json')).toBe(pasted);
  });

  it('writes a readable Markdown report with the method, the fit, what it changes and the cautions', async () => {
    const r = await runCli(['fit', FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH]);
    expect(r.code, r.stderr).toBe(0);
    for (const heading of [
      '## Method',
      '## Frames',
      '## Drag polar',
      '## Thrust',
      '## Demonstrated lift',
      '## What the fit changes',
    ])
      expect(r.stdout).toContain(heading);
    expect(r.stdout).toContain('D = T − W·Ps/V');
    expect(r.stdout).toContain('at most one usable frame per rate window');
    expect(r.stdout).toMatch(/steady segments, calm air, a known throttle/);
    expect(r.stdout).toMatch(/\| CD0 \| 0\.0320 \| 0\.0\d{3} \| 0\.0\d{3} … 0\.0\d{3} \|/);
    expect(r.stdout).toMatch(/\| max sustained load factor \| [\d.]+ at [\d.]+ m\/s \| [\d.]+ at [\d.]+ m\/s \|/);
  });

  it('shows the sustained radius to 0.1 m in Markdown, as JSON gives it, so a change of under a metre is seen', async () => {
    // The bundled flight's fit moves the smallest sustained radius from about 9.7 m to about 10.0 m: shown to whole
    // metres both read "10" and the table hid the change it is there to show.
    const [md, json] = await Promise.all([
      runCli(['fit', FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH]),
      runCli(['fit', FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json']),
    ]);
    expect(md.code, md.stderr).toBe(0);
    const env = JSON.parse(json.stdout).envelope;
    const shown = (side: 'file' | 'fitted') =>
      `${env[side].min_sustained_radius.radius_m.toFixed(1)} at ${env[side].min_sustained_radius.speed_mps.toFixed(1)} m/s`;
    const radius = (side: 'file' | 'fitted'): number => env[side].min_sustained_radius.radius_m;
    expect(radius('file').toFixed(1)).not.toBe(radius('fitted').toFixed(1));
    expect(md.stdout).toContain(`| min sustained radius, m | ${shown('file')} | ${shown('fitted')} |`);
  });

  it('draws the polar and the Ps residual to an SVG file, refusing to replace one without --force', async () => {
    const dir = tmp();
    const plot = join(dir, 'fit.svg');
    const out = await fitJson([FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--plot', plot]);
    const svg = readFileSync(plot, 'utf8');
    const elements = checkXml(svg);
    const ids = elements.map((e) => e.attributes['id']).filter(Boolean);
    expect(ids).toEqual(
      expect.arrayContaining([
        'polar-band',
        'polar-fitted',
        'polar-file',
        'polar-points',
        'residual-file-1',
        'residual-fitted-1',
        'legend',
      ]),
    );
    // One point per independent idle sample (the fit's samples).
    const circles = svg.slice(svg.indexOf('id="polar-points"'), svg.indexOf('</g>', svg.indexOf('id="polar-points"')));
    expect(circles.match(/<circle /g)?.length).toBe(out.polar!.samples);
    expect(svg).toContain('Advisory only');

    const again = await runCli(['fit', FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--plot', plot]);
    expect(again.code).toBe(2);
    expect(again.stderr).toContain(`--plot ${plot}: the file exists; give --force to overwrite it`);
    writeFileSync(plot, 'old');
    const forced = await runCli(['fit', FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--plot', plot, '--force']);
    expect(forced.code, forced.stderr).toBe(0);
    expect(readFileSync(plot, 'utf8')).toBe(svg);
    const wrong = await runCli(['fit', FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--plot', join(dir, 'fit.png')]);
    expect(wrong.code).toBe(2);
    expect(wrong.stderr).toContain('must end in .svg');
    const onInput = await runCli([
      'fit',
      FIT_FLIGHT,
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--write-airframe',
      DEMO_AIRFRAME_PATH,
      '--force',
    ]);
    expect(onInput.code).toBe(2);
    expect(onInput.stderr).toMatch(/is the --aircraft file; writing there would destroy it/);
  });

  it('recovers a flight with 20 % more drag and 10 % less thrust; --write-airframe then envelope gives the fitted envelope', async () => {
    const dir = tmp();
    const flight = variantFlight(dir);
    const written = join(dir, 'fitted.json');
    const out = await fitJson([flight, '--aircraft', DEMO_AIRFRAME_PATH, '--write-airframe', written]);
    const truth = airframe(variantAirframeJson(1.2, 0.9));
    expect(out.polar!.cd0.ci95[0]).toBeLessThan(truth.cd0);
    expect(out.polar!.cd0.ci95[1]).toBeGreaterThan(truth.cd0);
    expect(out.polar!.k.ci95[0]).toBeLessThan(truth.k);
    expect(out.polar!.k.ci95[1]).toBeGreaterThan(truth.k);
    expect(out.thrust_scale!.ci95[0]).toBeLessThan(0.9);
    expect(out.thrust_scale!.ci95[1]).toBeGreaterThan(0.9);

    const file = JSON.parse(readFileSync(written, 'utf8')) as Record<string, unknown>;
    expect(file['polar']).toEqual({ cd0: expect.any(Number), k: expect.any(Number) });
    const thrust = file['thrust'] as { power_w: number; static_thrust_n: number; prop_efficiency: number };
    expect(thrust.power_w).toBeCloseTo(240 * out.thrust_scale!.value, 2);
    expect(thrust.static_thrust_n).toBeCloseTo(18 * out.thrust_scale!.value, 3);
    expect(thrust.prop_efficiency).toBe(0.6);
    const fitted = file['fitted'] as { files: string[]; data_date: string; samples: { idle: number } };
    expect(fitted.files).toEqual(['variant.ndjson']);
    expect(fitted.data_date).toMatch(/^\d{4}-\d{2}-\d{2}$/);

    const c = out.conditions;
    const env = await runCli([
      'envelope',
      '--aircraft',
      written,
      '--altitude',
      String(c.altitude_m),
      '--isa-dev',
      String(c.isa_deviation_c),
      '--mass',
      String(c.mass_kg),
      '--format',
      'json',
    ]);
    expect(env.stderr, 'the loader takes the "fitted" record without a warning').toBe('');
    expect(env.code).toBe(0);
    const envelope = JSON.parse(env.stdout) as Record<string, unknown>;
    for (const [key, value] of Object.entries(out.envelope.fitted)) expect(envelope[key], key).toEqual(value);
    expect(out.envelope.fitted).not.toEqual(out.envelope.file);
  });

  it('reads CSV through a mapping file and gives the same fit as the NDJSON', async () => {
    const dir = tmp();
    const frames = simulateFrames(airframe(variantAirframeJson(1.2, 0.9)), fitPlanJson(DEMO_LIKE_NOISE), 4);
    const flight = join(dir, 'flight.ndjson');
    writeFileSync(flight, ndjson(frames));
    const csv = join(dir, 'log.csv');
    const rows = ['time;speed;height;roll;accel_z;throttle_pct'];
    for (const f of frames)
      rows.push(
        [
          f['t_s'],
          f['tas_mps'],
          f['alt_m'],
          f['bank_deg'],
          f['nz'],
          Math.round((f['throttle'] as number) * 1000) / 10,
        ].join(';'),
      );
    writeFileSync(csv, rows.join('\n') + '\n');
    const mapping = join(dir, 'mapping.json');
    writeFileSync(
      mapping,
      JSON.stringify({
        delimiter: ';',
        keys: {
          t_s: { column: 'time', unit: 's' },
          tas_mps: { column: 'speed', unit: 'm/s' },
          alt_m: { column: 'height', unit: 'm' },
          bank_deg: { column: 'roll', unit: 'deg' },
          nz: { column: 'accel_z', unit: 'g' },
          throttle: { column: 'throttle_pct', unit: '%' },
        },
      }),
    );
    const fromNdjson = await fitJson([flight, '--aircraft', DEMO_AIRFRAME_PATH]);
    const fromCsv = await fitJson([csv, '--mapping', mapping, '--aircraft', DEMO_AIRFRAME_PATH]);
    expect(fromCsv.frames).toEqual(fromNdjson.frames);
    expect(fromCsv.polar!.cd0.value).toBeCloseTo(fromNdjson.polar!.cd0.value, 6);
    expect(fromCsv.polar!.k.value).toBeCloseTo(fromNdjson.polar!.k.value, 6);
    expect(fromCsv.thrust_scale!.value).toBeCloseTo(fromNdjson.thrust_scale!.value, 6);
  });

  it('reads a recording and takes its #link lost/open pair as a break: no usable frame in the window after it', async () => {
    const dir = tmp();
    const frames = simulateFrames(airframe(variantAirframeJson(1.2, 0.9)), fitPlanJson(DEMO_LIKE_NOISE), 5);
    const plain = join(dir, 'flight.ndjson');
    writeFileSync(plain, ndjson(frames));
    const recording = join(dir, 'flight.tmrec');
    const startMs = Date.UTC(2026, 4, 4, 10, 0, 0);
    const parts: Buffer[] = [encodeHeader('udp 127.0.0.1:14550', startMs), encodeLinkEvent(startMs, 'open')];
    frames.forEach((f, i) => {
      const atMs = startMs + Math.round((f['t_s'] as number) * 1000);
      // The link drops in the middle of the 14 m/s glide (t = 27 s) and comes back at once.
      if (i === 270) parts.push(encodeLinkEvent(atMs - 1, 'lost', 'radio'), encodeLinkEvent(atMs, 'open'));
      parts.push(encodeLine(atMs, Buffer.from(JSON.stringify(f)), false));
    });
    writeFileSync(recording, Buffer.concat(parts));
    const written = join(dir, 'fitted.json');
    const a = await fitJson([plain, '--aircraft', DEMO_AIRFRAME_PATH]);
    const b = await fitJson([recording, '--aircraft', DEMO_AIRFRAME_PATH, '--write-airframe', written]);
    expect(b.frames.total).toBe(a.frames.total);
    // The rate window (1 s, 10 frames) after the reconnect is not usable.
    expect(a.frames.idle - b.frames.idle).toBe(10);
    expect(b.polar).not.toBeNull();
    const fitted = JSON.parse(readFileSync(written, 'utf8')) as {
      fitted: { data_date: string; data_date_from: string };
    };
    expect(fitted.fitted.data_date).toBe('2026-05-04');
    expect(fitted.fitted.data_date_from).toBe('recording');
  });

  it('fits several flights together', async () => {
    const dir = tmp();
    const truth = airframe(variantAirframeJson(1.2, 0.9));
    const all = simulateFrames(truth, fitPlanJson(DEMO_LIKE_NOISE), 6);
    // The glides in one file, the full-throttle flying in another (the second file's clock starts again at 0).
    const split = all.findIndex((f) => (f['t_s'] as number) >= 65);
    const first = join(dir, 'glides.ndjson');
    const second = join(dir, 'power.ndjson');
    writeFileSync(first, ndjson(all.slice(0, split)));
    writeFileSync(
      second,
      ndjson(all.slice(split).map((f) => ({ ...f, t_s: Math.round(((f['t_s'] as number) - 65) * 1e4) / 1e4 }))),
    );
    const out = await fitJson([first, second, '--aircraft', DEMO_AIRFRAME_PATH]);
    expect(out.files).toEqual([first, second]);
    expect(out.frames.total).toBe(all.length);
    expect(out.polar).not.toBeNull();
    expect(out.thrust_scale).not.toBeNull();
    expect(out.thrust_scale!.ci95[0]).toBeLessThan(0.9);
    expect(out.thrust_scale!.ci95[1]).toBeGreaterThan(0.9);
  });

  it("without glides gives the thrust with the file's polar, and says what to fly for the polar", async () => {
    const dir = tmp();
    const flight = join(dir, 'power-only.ndjson');
    const powered = fitPlanJson(DEMO_LIKE_NOISE);
    const plan = { ...powered, segments: powered.segments.filter((seg) => seg.type !== 'glide') };
    // The file's polar is the truth here, the thrust 10 % short.
    writeFileSync(flight, ndjson(simulateFrames(airframe(variantAirframeJson(1, 0.9)), plan, 1)));
    const plot = join(dir, 'plot.svg');
    const out = await fitJson([flight, '--aircraft', DEMO_AIRFRAME_PATH, '--plot', plot]);
    expect(out.polar).toBeNull();
    expect(out.polar_reason).toMatch(
      /\d+ independent idle samples? .* at least 30 .* power-off glides .* three or more speeds/,
    );
    expect(out.thrust_scale!.ci95[0]).toBeLessThan(0.9);
    expect(out.thrust_scale!.ci95[1]).toBeGreaterThan(0.9);
    expect(out.thrust_scale!.polar).toBe('file');
    expect(out.warnings.join(' ')).toMatch(/polar not estimated/);
    const svg = readFileSync(plot, 'utf8');
    checkXml(svg);
    expect(svg).toContain('polar not estimated');
    expect(svg).not.toMatch(/NaN|Infinity/);
  });

  describe('refuses, with exit 2, what is missing and what to fly', () => {
    const truth = airframe(variantAirframeJson(1.2, 0.9));

    it('a flight without throttle', async () => {
      const dir = tmp();
      const flight = join(dir, 'no-throttle.ndjson');
      const frames = simulateFrames(truth, fitPlanJson(DEMO_LIKE_NOISE), 1).map(({ throttle: _t, ...rest }) => rest);
      writeFileSync(flight, ndjson(frames));
      const r = await runCli(['fit', flight, '--aircraft', DEMO_AIRFRAME_PATH]);
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr).toMatch(/no frame carries "throttle" \(1241 accepted frames\)/);
      expect(r.stderr).toMatch(/power-off glides .* at three or more speeds/);
    });

    it('a flight at a single speed', async () => {
      const dir = tmp();
      const flight = join(dir, 'one-speed.ndjson');
      const plan = {
        start: { alt_m: 400, tas_mps: 15 },
        noise: DEMO_LIKE_NOISE,
        segments: [{ type: 'glide' as const, duration_s: 60 }],
      };
      writeFileSync(flight, ndjson(simulateFrames(truth, plan, 1)));
      const r = await runCli(['fit', flight, '--aircraft', DEMO_AIRFRAME_PATH]);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(/every usable frame was flown at one speed \(1[45]\.\d–1[45]\.\d m\/s TAS\)/);
      expect(r.stderr).toMatch(/glides/);
    });

    it('a flight without a usable frame (part throttle throughout)', async () => {
      const dir = tmp();
      const flight = join(dir, 'cruise.ndjson');
      const plan = {
        start: { alt_m: 100, tas_mps: 17 },
        noise: DEMO_LIKE_NOISE,
        segments: [{ type: 'straight' as const, duration_s: 30 }],
      };
      writeFileSync(flight, ndjson(simulateFrames(truth, plan, 1)));
      const r = await runCli(['fit', flight, '--aircraft', DEMO_AIRFRAME_PATH]);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(/no usable frame among 301 accepted frames/);
      expect(r.stderr).toMatch(/full-throttle level accelerations/);
    });

    it('a missing file, no file, and --force without an output', async () => {
      const missing = await runCli(['fit', join(tmp(), 'nope.ndjson'), '--aircraft', DEMO_AIRFRAME_PATH]);
      expect(missing.code).toBe(2);
      expect(missing.stderr).toMatch(/nope\.ndjson/);
      const none = await runCli(['fit', '--aircraft', DEMO_AIRFRAME_PATH]);
      expect(none.code).toBe(2);
      expect(none.stderr).toContain('the flight FILE(s) to fit are missing');
      const force = await runCli(['fit', FIT_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--force']);
      expect(force.code).toBe(2);
      expect(force.stderr).toContain('--force applies to --plot and --write-airframe only');
      expect(existsSync(join(REPO_ROOT, 'fitted.json'))).toBe(false);
    });
  });
});
