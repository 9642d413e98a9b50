import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { encodeHeader, encodeLine, encodeLinkEvent } from '../../src/recording/format.js';
import { checkXml } from '../report/xml-check.js';
import { EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';
import { REPO_ROOT, runCli } from '../helpers/run-cli.js';

// test/fixtures/review-flight.ndjson is an invented test flight (not real data) for the example airframe of
// the issue text, 10 frames/s from t = 0 to 30 s at sea level ISA, with planted exceedances and bad lines.
// With --smooth 0 the events follow from hand computation (Anderson ch. 6 relations, thresholds of the issue):
//  - 12 m/s: n_stall = q·S·CLmax/W = 88.2·0.55·1.2/31.381 = 1.85499
//    nz 1.55 (u 0.836) from 8.0, 1.60 (0.863) from 10.0, 1.75 (0.943) from 11.0, 1.65 (0.889 ≥ 0.88, warning held
//    by hysteresis) from 12.0, 1.60 (< 0.88: warning off) from 13.0, 1.2 (0.647: caution off) from 14.0
//    → stall caution 8.0–14.0, stall warning 11.0–13.0
//  - 16.0–18.0: stall utilization dithering 0.81/0.79 (±0.01 around 0.80) → one caution event 16.0–18.0
//  - 22 m/s: nz 3.2 from 20.0 (structure 3.2/3.8 = 0.842), 3.7 from 20.5 (0.974 ≥ 0.95), 3.2 from 21.0 (< 0.93),
//    1.0 from 22.0. n_thrust at 22 m/s: T = min(14, 0.62·200/22) = 5.636 N, q·S = 163.05 N,
//    n_T = (163.05/31.381)·√((5.636 − 4.891)/8.152) = 1.5703 → thrust utilization 2.04 → thrust caution 20.0–22.0;
//    structure caution 20.0–22.0, structure warning 20.5–21.0
//  - 20 m/s, nz −1.3 from 24.0 to 25.0: structure −1.3/−1.52 = 0.855 → caution 24.0–25.0
//  - 27.0–28.0: 3 m/s (< 0.5·Vs1 = 4.41 m/s) with nz 2.0: not flying, no alert
//  - 29.5–30.0: nz 1.55 → stall caution still on at the last frame → 29.5–30.0
// Bad lines: garbage, a stray frame back in time, "tas_mps": "fast", no alt_m, two airspeed keys, NaN; one blank
// line (not counted). 301 frames accepted, 6 rejected, 307 lines read.
const FLIGHT = join(REPO_ROOT, 'test/fixtures/review-flight.ndjson');

const EXPECTED_EVENTS = [
  ['stall', 'caution', 8.0, 14.0],
  ['stall', 'warning', 11.0, 13.0],
  ['stall', 'caution', 16.0, 18.0],
  ['structure', 'caution', 20.0, 22.0],
  ['thrust', 'caution', 20.0, 22.0],
  ['structure', 'warning', 20.5, 21.0],
  ['structure', 'caution', 24.0, 25.0],
  ['stall', 'caution', 29.5, 30.0],
];

function tmp(): string {
  return mkdtempSync(join(tmpdir(), 'turnmargin-review-'));
}

describe('turnmargin review (built CLI) on the invented fixture flight', () => {
  it('reports the exact counts, events, peaks and time in level as JSON', async () => {
    const r = await runCli([
      'review',
      FLIGHT,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--smooth',
      '0',
      '--format',
      'json',
    ]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    for (const key of [
      'source',
      'airframe',
      'frames',
      'accepted',
      'rejected',
      'rejects',
      'duration_s',
      'events',
      'peaks',
      'time_in_level',
    ]) {
      expect(out, key).toHaveProperty(key);
    }
    expect(out.airframe).toBe('Example airframe');
    expect(out.frames).toBe(307);
    expect(out.accepted).toBe(301);
    expect(out.rejected).toBe(6);
    // Each rejected line with its stable code, the key at fault and the offending value (README's codes table).
    expect(out.rejects).toEqual([
      { line: 32, reason: 'invalid JSON', code: 'invalid_json' },
      { line: 43, reason: 'time not increasing', code: 'time_not_increasing' },
      {
        line: 95,
        reason: 'tas_mps must be a number from 0 to 300 m/s (got "fast")',
        code: 'wrong_type',
        key: 'tas_mps',
        got: '"fast"',
      },
      { line: 156, reason: 'alt_m is required', code: 'missing_key', key: 'alt_m' },
      {
        line: 202,
        reason: 'exactly one airspeed key is allowed (got ias_mps and tas_mps)',
        code: 'conflicting_keys',
        got: 'ias_mps and tas_mps',
      },
      { line: 273, reason: 'invalid JSON (NaN or Infinity is not a finite number)', code: 'invalid_json' },
    ]);
    expect(out.duration_s).toBeCloseTo(30, 9);

    expect(out.events.map((e: Record<string, unknown>) => [e['limit'], e['level'], e['start_s'], e['end_s']])).toEqual(
      EXPECTED_EVENTS,
    );
    expect(Object.keys(out.events[0]).sort()).toEqual([
      'duration_s',
      'end_s',
      'ended_by',
      'level',
      'limit',
      'min_time_to_stall_caution_s',
      'n_at_peak',
      'peak_t_s',
      'peak_utilization',
      'speed_at_peak_mps',
      'start_s',
    ]);
    const stallCaution = out.events[0];
    expect(stallCaution.duration_s).toBeCloseTo(6, 9);
    expect(stallCaution.peak_utilization).toBeCloseTo(1.75 / 1.85499, 3); // 0.9434
    expect(stallCaution.peak_t_s).toBe(11);
    expect(stallCaution.speed_at_peak_mps).toBe(12);
    expect(stallCaution.n_at_peak).toBe(1.75);

    expect(out.peaks.stall).toEqual({ utilization: expect.closeTo(0.9434, 4), t_s: 11 });
    expect(out.peaks.structure).toEqual({ utilization: expect.closeTo(3.7 / 3.8, 4), t_s: 20.5 });
    expect(out.peaks.thrust.utilization).toBeCloseTo(3.7 / 1.5703, 2);
    expect(out.peaks.thrust.t_s).toBe(20.5);

    // Level intervals: an alert stays shown through its 0.5 s clear stretch (it goes off 0.5 s after the first
    // clear frame; the event ends at that frame). Caution 8–11, 13.5–14.5, 16–18.5, 20–20.5, 21.5–22.5, 24–25.5,
    // 29.5–30 = 10.0 s; warning 11–13.5, 20.5–21.5 = 3.5 s
    expect(out.time_in_level.caution).toBeCloseTo(10.0, 6);
    expect(out.time_in_level.warning).toBeCloseTo(3.5, 6);
    expect(out.time_in_level.normal).toBeCloseTo(16.5, 6);
  });

  it('finds the same events, a little later, with the default smoothing (τ 0.15 s delays the filtered n)', async () => {
    const r = await runCli(['review', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'json']);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    for (const [limit, level, start, end] of EXPECTED_EVENTS) {
      const match = out.events.find((e: Record<string, number | string>) => {
        const delayS = (e['start_s'] as number) - (start as number);
        return e['limit'] === limit && e['level'] === level && delayS >= 0 && delayS <= 0.7;
      });
      expect(match, `${limit} ${level} ${start}`).toBeDefined();
      expect(Math.abs(match.end_s - (end as number))).toBeLessThanOrEqual(0.3);
    }
  });

  it('writes a Markdown report for a flight-test record', async () => {
    const r = await runCli(['review', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0']);
    expect(r.code).toBe(0);
    const md = r.stdout;
    for (const heading of [
      '# Flight review',
      '## Data and conditions',
      '## Events',
      '## Peak utilization per limit',
      '## Time in each level',
      '## Rejected lines',
      '## Caution',
    ]) {
      expect(md).toContain(heading);
    }
    expect(md).toContain('**Example airframe**');
    expect(md).toContain('2 warning events and 6 caution events');
    expect(md).toMatch(/\| 2 \| stall \| WARNING \| 11\.00 \| 13\.00 \| 2\.00 \| 94\.3 % \|/);
    expect(md).toContain('| 43 | time_not_increasing | time not increasing |');
    // the last stall caution is still on when the data end; the one closed at 18.00 cleared
    expect(md).toMatch(/\| 8 \| stall \| CAUTION \| 29\.50 \| 30\.00 \| .* \| end of data \|/);
    expect(md).toMatch(/\| 3 \| stall \| CAUTION \| 16\.00 \| 18\.00 \| .* \| alert cleared \|/);
    expect(md).toContain(
      "The aircraft's approved limits, the operator's procedures and local aviation rules take precedence.",
    );
    expect(md).toContain('Frames below 0.5·Vs1 | 10');
  });

  it('writes one CSV row per event', async () => {
    const r = await runCli(['review', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0', '--format', 'csv']);
    expect(r.code).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toBe(
      'limit,level,start_s,end_s,duration_s,peak_utilization,peak_t_s,speed_at_peak_mps,n_at_peak,ended_by,' +
        'min_time_to_stall_caution_s,assumed_n_from_bank_share,assumed_temperature_isa_share,' +
        'assumed_n_limit_default_share,model_check_full_frames,model_check_full_mean_residual_mps,' +
        'model_check_full_sd_residual_mps,model_check_full_drag_error_pct,model_check_idle_frames,' +
        'model_check_idle_mean_residual_mps,model_check_idle_sd_residual_mps,model_check_idle_drag_error_pct',
    );
    // every frame has nz, none has oat_c, the airframe gives n_limit_pos
    const header = lines[0]!.split(',');
    const shares = ['assumed_n_from_bank_share', 'assumed_temperature_isa_share', 'assumed_n_limit_default_share'];
    expect(shares.map((c) => lines[1]!.split(',')[header.indexOf(c)])).toEqual(['0', '1', '0']);
    expect(lines).toHaveLength(1 + EXPECTED_EVENTS.length);
    expect(lines[2]!.startsWith('stall,warning,11,13,2,0.943')).toBe(true);
  });

  it('writes the per-frame margin records and the n–V plot', async () => {
    const dir = tmp();
    const perFrame = join(dir, 'frames.ndjson');
    const plot = join(dir, 'plot.svg');
    const r = await runCli([
      'review',
      FLIGHT,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--smooth',
      '0',
      '--per-frame',
      perFrame,
      '--plot',
      plot,
      '--format',
      'json',
    ]);
    expect(r.code).toBe(0);
    const records = readFileSync(perFrame, 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    expect(records).toHaveLength(301);
    for (const key of [
      't_s',
      'tas_mps',
      'eas_mps',
      'density_kg_m3',
      'n_measured',
      'n_stall',
      'n_thrust',
      'n_structural',
      'utilization',
      'bank_limit_deg',
      'bank_sustained_deg',
      'level',
      'alerts',
    ]) {
      expect(records[0], key).toHaveProperty(key);
    }
    const at11 = records.find((x) => x.t_s === 11)!;
    expect(at11.level).toBe('warning');
    expect(at11.alerts).toEqual([
      { limit: 'stall', level: 'warning' },
      { limit: 'stall', level: 'caution' },
    ]);
    const svg = readFileSync(plot, 'utf8');
    const els = checkXml(svg);
    for (const id of ['stall-curve', 'thrust-curve', 'structural-limit'])
      expect(
        els.some((e) => e.attributes['id'] === id),
        id,
      ).toBe(true);
    const count = (level: string) =>
      Number(els.find((e) => e.attributes['class'] === `points-${level}`)!.attributes['data-count']);
    // frames at 10 frames/s, each alert shown through its 0.5 s clear stretch: 35 warning frames (11.0–13.4,
    // 20.5–21.4); 101 caution frames (8.0–10.9, 13.5–14.4, 16.0–18.4, 20.0–20.4, 21.5–22.4, 24.0–25.4, 29.5–30.0,
    // less the rejected lines among them)
    expect(count('warning')).toBe(35);
    expect(count('caution')).toBe(101);
    expect(count('normal') + count('caution') + count('warning')).toBe(301);
  });

  it('reads a CSV log with a header', async () => {
    const dir = tmp();
    const csv = join(dir, 'flight.csv');
    // Invented: 2 s at 12 m/s, a pull to nz 1.75 (stall utilization 0.943, warning) from 1.0 to 1.5 s
    const rows = ['# invented test flight', 't_s,tas_mps,alt_m,nz'];
    for (let i = 0; i <= 20; i++) rows.push(`${i / 10},12,0,${i >= 10 && i < 15 ? 1.75 : 1.0}`);
    writeFileSync(csv, rows.join('\n') + '\n');
    const r = await runCli(['review', csv, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0', '--format', 'json']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.accepted).toBe(21);
    expect(out.events.map((e: Record<string, unknown>) => [e['level'], e['start_s'], e['end_s']])).toEqual([
      ['caution', 1, 1.5],
      ['warning', 1, 1.5],
    ]);
  });

  it('reads a recording, restarting the computation after a reconnect whose sender clock restarted', async () => {
    // Invented recording: 12 m/s at sea level; first link 0–2 s with nz 1.6 (stall utilization 0.8625, caution)
    // from 1.0 to 1.5 s; the link drops, reopens, and the sender's clock starts again at 0: nz 1.75 (0.943, warning)
    // from 0.5 to 0.8 s. One line of radio noise in between.
    const dir = tmp();
    const rec = join(dir, 'flight.tmrec');
    const parts: Buffer[] = [
      encodeHeader('serial /dev/ttyTEST @ 57600', 1_700_000_000_000),
      encodeLinkEvent(1_700_000_000_000, 'open'),
    ];
    let ms = 1_700_000_000_000;
    const frame = (t: number, nz: number) => {
      ms += 100;
      parts.push(encodeLine(ms, Buffer.from(JSON.stringify({ t_s: t, tas_mps: 12, alt_m: 0, nz })), false));
    };
    for (let i = 0; i <= 20; i++) frame(i / 10, i >= 10 && i < 15 ? 1.6 : 1.0);
    parts.push(encodeLine(ms + 50, Buffer.from([0x00, 0xff, 0x13, 0x37]), false));
    parts.push(encodeLinkEvent(ms + 60, 'lost', 'port disappeared'), encodeLinkEvent(ms + 900, 'open'));
    ms += 900;
    for (let i = 0; i <= 10; i++) frame(i / 10, i >= 5 && i < 8 ? 1.75 : 1.0);
    writeFileSync(rec, Buffer.concat(parts));

    const r = await runCli(['review', rec, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0', '--format', 'json']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.accepted).toBe(32);
    expect(out.rejected).toBe(1);
    expect(out.frames).toBe(33);
    expect(out.conditions.segments).toBe(2);
    expect(out.duration_s).toBeCloseTo(3.0, 9);
    expect(out.events.map((e: Record<string, unknown>) => [e['level'], e['start_s'], e['end_s']])).toEqual([
      ['caution', 1, 1.5],
      ['caution', 0.5, 0.8],
      ['warning', 0.5, 0.8],
    ]);
  });

  it('reads a foreign log through a mapping file (time in ms, speed in knots, altitude in feet, nz in m/s²)', async () => {
    // Invented log: 12 m/s = 23.3261 kt (1 kt = 1852/3600 m/s, exact); nz 1.75 g = 17.1616 m/s² (g0 9.80665)
    // from 1000 to 1400 ms → stall utilization 0.943 (warning) from 1.0 to 1.5 s.
    const dir = tmp();
    const log = join(dir, 'foreign.csv');
    const rows = ['time_ms;speed_kt;alt_ft;acc_z'];
    for (let i = 0; i <= 20; i++) rows.push(`${i * 100};23.3261;0;${i >= 10 && i < 15 ? 17.1616 : 9.80665}`);
    writeFileSync(log, rows.join('\n') + '\n');
    const mapping = join(dir, 'mapping.json');
    writeFileSync(
      mapping,
      JSON.stringify({
        delimiter: ';',
        keys: {
          t_s: { column: 'time_ms', unit: 'ms' },
          tas_mps: { column: 'speed_kt', unit: 'kt' },
          alt_m: { column: 'alt_ft', unit: 'ft' },
          nz: { column: 'acc_z', unit: 'm/s²' },
        },
      }),
    );
    const r = await runCli([
      'review',
      log,
      '--mapping',
      mapping,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--smooth',
      '0',
      '--format',
      'json',
    ]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.accepted).toBe(21);
    expect(out.events.map((e: Record<string, unknown>) => [e['level'], e['start_s'], e['end_s']])).toEqual([
      ['caution', 1, 1.5],
      ['warning', 1, 1.5],
    ]);
    expect(out.events[1].speed_at_peak_mps).toBeCloseTo(12, 3);
    expect(out.events[1].n_at_peak).toBeCloseTo(1.75, 4);
  });

  it('applies a thresholds file over the airframe', async () => {
    const dir = tmp();
    const th = join(dir, 'thresholds.json');
    writeFileSync(th, JSON.stringify({ stall_warning: 0.95 }));
    const r = await runCli([
      'review',
      FLIGHT,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--smooth',
      '0',
      '--thresholds',
      th,
      '--format',
      'json',
    ]);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    // the stall peak is 0.943 < 0.95: no stall warning any more
    expect(
      out.events.filter((e: Record<string, unknown>) => e['limit'] === 'stall' && e['level'] === 'warning'),
    ).toHaveLength(0);
  });

  it('exits 2 with a clear message for a missing file, no accepted frame or a bad option', async () => {
    const missing = await runCli(['review', 'no-such-flight.ndjson', '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/no-such-flight\.ndjson: cannot read the telemetry file \(no such file\)/);

    const allBad = await runCli(['review', 'test/fixtures/review-all-bad.ndjson', '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(allBad.code).toBe(2);
    expect(allBad.stderr).toMatch(/no accepted frame \(3 lines read, 3 rejected\); first problem, line 1/);

    const noAircraft = await runCli(['review', FLIGHT]);
    expect(noAircraft.code).toBe(2);
    expect(noAircraft.stderr).toContain('--aircraft FILE is required');

    const badFormat = await runCli(['review', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'pdf']);
    expect(badFormat.code).toBe(2);
    expect(badFormat.stderr).toContain('--format must be one of md, json, csv, html (got "pdf")');

    const badSmooth = await runCli(['review', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', 'fast']);
    expect(badSmooth.code).toBe(2);
    expect(badSmooth.stderr).toContain('--smooth must be a number from 0 to 10 (got "fast")');
  });

  it('lists every option with its unit and default in --help', async () => {
    const r = await runCli(['review', '--help']);
    expect(r.code).toBe(0);
    for (const opt of ['--aircraft', '--format', '--per-frame', '--plot', '--thresholds', '--smooth', '--mapping'])
      expect(r.stdout).toContain(opt);
    expect(r.stdout).toContain('unit: s; default: 0.15');
  });
});
