import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEMO_AIRFRAME_PATH, EXAMPLE_AIRFRAME_PATH, exampleAirframeJson } from '../helpers/airframes.js';
import { runCli } from '../helpers/run-cli.js';

describe('turnmargin envelope (built CLI)', () => {
  it('prints the contract JSON keys with the worked example values', async () => {
    const r = await runCli(['envelope', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--speeds', '12', '--format', 'json']);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(Object.keys(out)).toEqual(
      expect.arrayContaining([
        'aircraft',
        'conditions',
        'stall_speed_mps',
        'corner_speed_mps',
        'max_sustained',
        'max_sustained_turn_rate',
        'min_sustained_radius',
        'points',
      ]),
    );
    expect(Object.keys(out.conditions).sort()).toEqual([
      'altitude_m',
      'density_kg_m3',
      'mass_kg',
      'pressure_pa',
      'temperature_k',
      'weight_n',
    ]);
    expect(out.aircraft).toBe('Example airframe');
    // Values of the contract's worked example (sea level ISA, 12 m/s).
    expect(out.conditions.weight_n).toBeCloseTo(31.381, 3);
    expect(out.stall_speed_mps).toBeCloseTo(8.811, 3);
    expect(out.corner_speed_mps).toBeCloseTo(17.175, 3);
    expect(out.max_sustained.load_factor).toBeCloseTo(3.031, 2);
    expect(out.max_sustained.speed_mps).toBeCloseTo(15.34, 1);
    expect(out.max_sustained_turn_rate.turn_rate_dps).toBeCloseTo(104.8, 0);
    expect(out.min_sustained_radius.radius_m).toBeCloseTo(8.386, 2);
    const p = out.points[0];
    expect(Object.keys(p).sort()).toEqual([
      'instantaneous',
      'n_stall',
      'n_structural',
      'n_thrust',
      'speed_mps',
      'sustained',
    ]);
    expect(Object.keys(p.sustained).sort()).toEqual(['bank_deg', 'limited_by', 'n', 'radius_m', 'turn_rate_dps']);
    expect(p.n_stall).toBeCloseTo(1.855, 3);
    expect(p.n_thrust).toBeCloseTo(2.957, 3);
    expect(p.sustained.limited_by).toBe('stall');
    expect(p.instantaneous.bank_deg).toBeCloseTo(57.38, 2);
  });

  it('prints a CSV with flat column names carrying units', async () => {
    const r = await runCli([
      'envelope',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--from',
      '10',
      '--to',
      '20',
      '--step',
      '2',
      '--format',
      'csv',
    ]);
    expect(r.code).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toBe(
      'speed_mps,n_stall,n_thrust,n_structural,sustained_n,sustained_limited_by,sustained_bank_deg,sustained_turn_rate_dps,' +
        'sustained_radius_m,instantaneous_n,instantaneous_limited_by,instantaneous_bank_deg,instantaneous_turn_rate_dps,instantaneous_radius_m,' +
        'vne_tas_mps',
    );
    // vne_mps 30 m/s CAS is 30 m/s TAS at sea level ISA (definition of CAS).
    expect(lines.slice(1).every((l) => l.endsWith(',30'))).toBe(true);
    expect(lines.slice(1).map((l) => Number(l.split(',')[0]))).toEqual([10, 12, 14, 16, 18, 20]);
  });

  it('prints an aligned table with units and the limiting factor by default', async () => {
    const r = await runCli(['envelope', '--aircraft', DEMO_AIRFRAME_PATH]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/TAS m\/s/);
    expect(r.stdout).toMatch(/sust limit/);
    expect(r.stdout).toMatch(/\bthrust\b/);
    expect(r.stdout).toMatch(/\bstructure\b/);
    expect(r.stdout).toMatch(/not flight-critical/);
    expect(r.stdout.split('\n').filter((l) => /^\s+\d+\.\d\d\s/.test(l))).toHaveLength(31);
  });

  it('gives vne as TAS at the conditions and a turn table with --banks, in JSON', async () => {
    const r = await runCli([
      'envelope',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--altitude',
      '3048',
      '--banks',
      '15,30,45,60',
      '--format',
      'json',
    ]);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    // vne_mps 30 m/s CAS at 10 000 ft ISA: TAS/CAS = 116.22/100 to within 0.1 % at this low speed (standard
    // subsonic relations with USSA 1976 pressure and temperature; the ratio barely depends on the speed here).
    expect(out.vne_tas_mps / 30).toBeCloseTo(1.1622, 2);
    expect(out.search_range_mps[1]).toBeCloseTo(out.vne_tas_mps, 3);
    expect(out.turns.map((t: { bank_deg: number }) => t.bank_deg)).toEqual([15, 30, 45, 60]);
    const t60 = out.turns[3];
    expect(Object.keys(t60).sort()).toEqual(['bank_deg', 'load_factor', 'stall_speed_mps', 'sustained']);
    expect(t60.load_factor).toBeCloseTo(2, 6); // 1/cos 60° (FAA-H-8083-25 chart: 2.0)
    expect(t60.stall_speed_mps).toBeCloseTo(out.stall_speed_mps * Math.SQRT2, 4);
    expect(Object.keys(t60.sustained).sort()).toEqual(['max_speed_mps', 'min_speed_mps', 'radius_m', 'turn_rate_dps']);
    expect(t60.sustained.min_speed_mps).toBeLessThan(t60.sustained.max_speed_mps);
  });

  it('prints the turn table as CSV and in the text table with --banks', async () => {
    const csv = await runCli(['envelope', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--banks', '30,80', '--format', 'csv']);
    expect(csv.code).toBe(0);
    const lines = csv.stdout.trim().split('\n');
    expect(lines[0]).toBe(
      'bank_deg,load_factor,stall_speed_mps,sustained_min_speed_mps,sustained_max_speed_mps,sustained_turn_rate_dps,' +
        'sustained_radius_m,vne_tas_mps',
    );
    expect(lines).toHaveLength(3);
    expect(lines[1]!.startsWith('30,1.154701,')).toBe(true);
    // 1/cos 80° = 5.75877 (rounded to 6 decimals); no speed can hold it with this airframe: empty band columns.
    expect(lines[2]).toMatch(/^80,5\.75877,[\d.]+,,,,,30$/);
    const table = await runCli(['envelope', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--banks', '30,80']);
    expect(table.code).toBe(0);
    expect(table.stdout).toMatch(/Level turns by bank/);
    expect(table.stdout).toMatch(/^\s+80\.0\s+5\.759\s+[\d.]+\s+none/m);
    expect(table.stdout).toMatch(/vne 30\.0 m\/s CAS = 30\.00 m\/s TAS/);
  });

  it('refuses a bank outside 0–89° and a mass outside the shared bounds', async () => {
    for (const args of [
      ['--banks', '90'],
      ['--banks', '-5'],
      ['--banks', '30,x'],
      ['--mass', '0.001'],
      ['--mass', '42000'],
    ]) {
      const r = await runCli(['envelope', '--aircraft', EXAMPLE_AIRFRAME_PATH, ...args]);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).toContain(`--${args[0]!.slice(2)}`);
    }
  });

  it('notes an optimum on the edge of a thrust table', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'tm-env-'));
    const file = join(dir, 'table.json');
    const json = {
      ...exampleAirframeJson(),
      thrust: {
        model: 'table',
        points: [
          [5, 14],
          [8.83, 14],
        ],
      },
    };
    writeFileSync(file, JSON.stringify(json));
    const r = await runCli(['envelope', '--aircraft', file, '--format', 'json']);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).notes.join(' ')).toMatch(/on the edge of the thrust table \(8\.83 m\/s\)/);
  });

  it('says when the structural limit is the 14 CFR 23.337 default', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'tm-env-'));
    const file = join(dir, 'nolimit.json');
    const json = { ...exampleAirframeJson(), n_limit_pos: undefined, n_limit_neg: undefined };
    writeFileSync(file, JSON.stringify(json));
    const r = await runCli(['envelope', '--aircraft', file, '--format', 'json', '--speeds', '20']);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.points[0].n_structural).toBe(3.8);
    expect(out.notes.join(' ')).toMatch(/14 CFR 23\.337\(a\)/);
  });

  it('exits 2 with the key named for a bad airframe file', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'tm-env-'));
    const file = join(dir, 'airframe.json');
    const json = exampleAirframeJson() as Record<string, unknown> & { thrust: Record<string, unknown> };
    writeFileSync(file, JSON.stringify({ ...json, mass_kg: -2, thrust: { ...json.thrust, power_w: 'lots' } }));
    const r = await runCli(['envelope', '--aircraft', file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('airframe.json: thrust.power_w must be a positive number (got "lots")');
    expect(r.stderr).toContain('airframe.json: mass_kg must be a mass from 0.05 to 10000 kg (got -2)');
    expect(r.stderr).not.toMatch(/at .*\.js:\d+/); // no stack trace
  });

  it('exits 2 for a missing file, invalid JSON and bad options', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'tm-env-'));
    const broken = join(dir, 'broken.json');
    writeFileSync(broken, '{ "name": ');
    for (const args of [
      ['envelope', '--aircraft', join(dir, 'missing.json')],
      ['envelope', '--aircraft', broken],
      ['envelope', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--altitude', 'high'],
      ['envelope', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'xml'],
      ['envelope'],
      ['envelope', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--oat', '10', '--isa-dev', '5'],
    ]) {
      const r = await runCli(args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).toMatch(/^turnmargin: /);
    }
  });

  it('prints a bank-limit schedule for each altitude and mass', async () => {
    const r = await runCli([
      'envelope',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--altitudes',
      '0,1000',
      '--masses',
      '3,3.5',
      '--speeds',
      '12,15',
      '--format',
      'csv',
    ]);
    expect(r.code).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toBe(
      'altitude_m,mass_kg,density_kg_m3,speed_mps,n_stall,n_thrust,n_structural,bank_limit_deg,bank_sustained_deg',
    );
    expect(lines).toHaveLength(1 + 2 * 2 * 2);
    // At 0 m, 3 kg, 12 m/s: n = min(0.8·n_stall, 0.8·3.8) with n_stall = q·S·CLmax/W; bank = acos(1/n)
    // (FAA-H-8083-25 bank/load-factor relation; thresholds are this tool's defaults).
    const nStall = (0.5 * 1.225 * 144 * 0.55 * 1.2) / (3 * 9.80665);
    const n = Math.min(0.8 * nStall, 0.8 * 3.8);
    const bank = (Math.acos(1 / n) * 180) / Math.PI;
    const row = lines[1]!.split(',');
    expect(Number(row[7])).toBeCloseTo(bank, 2);
  });

  it('takes negative option values: a cold day below sea level', async () => {
    const r = await runCli([
      'envelope',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--altitude',
      '-200',
      '--oat',
      '-5',
      '--speeds',
      '12',
      '--format',
      'json',
    ]);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.conditions.altitude_m).toBe(-200);
    expect(out.conditions.temperature_k).toBeCloseTo(268.15, 6);
    const cold = await runCli([
      'envelope',
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--isa-dev',
      '-10',
      '--altitudes',
      '-200,0',
      '--format',
      'csv',
    ]);
    expect(cold.code, cold.stderr).toBe(0);
  });

  it('lists every option with its unit and default in --help', async () => {
    const r = await runCli(['envelope', '--help']);
    expect(r.code).toBe(0);
    for (const opt of [
      '--aircraft',
      '--altitude',
      '--isa-dev',
      '--oat',
      '--mass',
      '--speeds',
      '--from',
      '--to',
      '--step',
      '--format',
      '--altitudes',
      '--masses',
    ]) {
      expect(r.stdout).toContain(opt);
    }
    expect(r.stdout).toMatch(/--altitude M\s+.*unit: m.*default: 0/);
  });
});
