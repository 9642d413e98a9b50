/**
 * The energy keys reach every output of the record (--no-ui, --per-frame, review's model check), and the options
 * --rate-window and --throttle reach the engine, through the built CLI. The flight is the bundled demo flight (an
 * invented scenario simulated from replays/plans/demo-flight.json with the demo airframe, so the model matches).
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { airframe, DEMO_AIRFRAME_PATH } from '../helpers/airframes.js';
import { demoAirframeJson, NO_NOISE, ndjson, simulateFrames } from '../helpers/fit-flights.js';
import { REPO_ROOT, runCli } from '../helpers/run-cli.js';

const DEMO_FLIGHT = join(REPO_ROOT, 'replays/demo-flight.ndjson');
const ENERGY_KEYS = [
  'throttle',
  'dvdt_mps2',
  'dhdt_mps',
  'bank_rate_dps',
  'ps_mps',
  'ps_model_mps',
  'ps_residual_mps',
  'ps_residual_mean_3s_mps',
  'time_to_stall_caution_s',
  'time_to_stall_warning_s',
  'sustained_band_mps',
];

function records(text: string): Array<Record<string, unknown>> {
  return text
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l) as Record<string, unknown>);
}

describe('the energy keys in the outputs of the record', () => {
  it('are in every replay --no-ui record, with the band and the rates defined in steady flight', async () => {
    const r = await runCli(['replay', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui', '--speed', '0']);
    expect(r.code).toBe(0);
    const recs = records(r.stdout);
    for (const rec of recs) for (const key of ENERGY_KEYS) expect(rec, key).toHaveProperty(key);
    const late = recs[recs.length - 1]!;
    expect(typeof late['dvdt_mps2']).toBe('number');
    expect(Array.isArray(late['sustained_band_mps'])).toBe(true);
    // Some frames of the demo are at full throttle or idle, where the model has a value.
    expect(recs.some((rec) => typeof rec['ps_residual_mps'] === 'number')).toBe(true);
  });

  it('are in review --per-frame records, the same as replay gives', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'tm-energy-'));
    const perFrame = join(dir, 'records.ndjson');
    const review = await runCli([
      'review',
      DEMO_FLIGHT,
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--format',
      'json',
      '--per-frame',
      perFrame,
    ]);
    expect(review.code).toBe(0);
    const replay = await runCli(['replay', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui', '--speed', '0']);
    const fromReview = records(readFileSync(perFrame, 'utf8'));
    const fromReplay = records(replay.stdout);
    expect(fromReview.length).toBe(fromReplay.length);
    for (let i = 0; i < fromReview.length; i += 97)
      for (const key of ENERGY_KEYS) expect(fromReview[i]![key], `${key} at ${i}`).toEqual(fromReplay[i]![key]);
  });

  it('give review a model check near zero for the demo flight, flown with the file’s own airframe', async () => {
    const r = await runCli(['review', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json']);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    for (const setting of ['full', 'idle']) {
      const m = out.model_check[setting];
      expect(Object.keys(m).sort()).toEqual(['drag_error_pct', 'frames', 'mean_residual_mps', 'sd_residual_mps']);
      expect(m.frames).toBeGreaterThan(100);
      expect(Math.abs(m.mean_residual_mps)).toBeLessThan(0.25);
    }
    const md = await runCli(['review', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH]);
    expect(md.stdout).toContain('## Model check (specific excess power)');
    const csv = await runCli(['review', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'csv']);
    expect(csv.stdout.split('\n')[0]).toContain('model_check_full_mean_residual_mps');
  });

  it('keep the model check in the CSV of a flight without any event, on a row with the event columns empty', async () => {
    // Glides and a gentle full-throttle climb, flown by the simulator with the file's own airframe: no limit comes
    // near its caution, so there is no event row to carry the flight-level columns.
    const dir = mkdtempSync(join(tmpdir(), 'tm-energy-csv-'));
    const flight = join(dir, 'calm.ndjson');
    const plan = {
      start: { alt_m: 400, tas_mps: 16 },
      noise: NO_NOISE,
      segments: [
        { type: 'glide' as const, duration_s: 12, tas_mps: 15 },
        { type: 'straight' as const, duration_s: 12, throttle: 1 },
      ],
    };
    writeFileSync(flight, ndjson(simulateFrames(airframe(demoAirframeJson()), plan, 1)));
    const base = ['review', flight, '--aircraft', DEMO_AIRFRAME_PATH];
    const [j, csv] = await Promise.all([runCli([...base, '--format', 'json']), runCli([...base, '--format', 'csv'])]);
    expect(j.code, j.stderr).toBe(0);
    const out = JSON.parse(j.stdout);
    expect(out.events).toEqual([]);
    expect(out.model_check.full.frames).toBeGreaterThan(50);
    expect(out.model_check.idle.frames).toBeGreaterThan(50);
    const [header, ...rows] = csv.stdout.trimEnd().split('\n');
    expect(rows).toHaveLength(1);
    const cell = (column: string): string => rows[0]!.split(',')[header!.split(',').indexOf(column)]!;
    expect(cell('limit')).toBe('');
    for (const setting of ['full', 'idle'])
      for (const key of ['frames', 'mean_residual_mps', 'sd_residual_mps', 'drag_error_pct'])
        expect(cell(`model_check_${setting}_${key}`), `${setting} ${key}`).toBe(String(out.model_check[setting][key]));
  });

  it('take the rate window from --rate-window and the throttle assumption from --throttle', async () => {
    const frames = join(REPO_ROOT, 'test/fixtures/review-flight.ndjson');
    const base = ['review', frames, '--aircraft', join(REPO_ROOT, 'test/fixtures/example-airframe.json')];
    const plain = JSON.parse((await runCli([...base, '--format', 'json'])).stdout);
    // The fixture has no throttle key: no model check without an assumption.
    expect(plain.model_check).toEqual({ full: null, idle: null });
    expect(plain.rate_window_s).toBe(1);
    const assumed = JSON.parse((await runCli([...base, '--format', 'json', '--throttle', 'idle'])).stdout);
    expect(assumed.throttle_assumed).toBe('idle');
    expect(assumed.model_check.full).toBeNull();
    expect(assumed.model_check.idle.frames).toBeGreaterThan(100);
    const windowed = JSON.parse((await runCli([...base, '--format', 'json', '--rate-window', '2'])).stdout);
    expect(windowed.rate_window_s).toBe(2);
    const bad = await runCli([...base, '--throttle', 'half']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toContain('--throttle must be one of full, idle');
    const badWindow = await runCli([...base, '--rate-window', '0']);
    expect(badWindow.code).toBe(2);
    expect(badWindow.stderr).toContain('--rate-window must be a number from 0.05 to 60 (got "0")');
  });

  it('say in --help which rate windows are accepted, the bounds the refusal names', async () => {
    for (const command of ['review', 'watch', 'replay', 'serve', 'demo']) {
      const help = await runCli([command, '--help']);
      expect(help.code, command).toBe(0);
      expect(help.stdout, command).toMatch(/--rate-window S .*\(0\.05 to 60\) \(unit: s; default: 1\)/);
    }
  });
});
