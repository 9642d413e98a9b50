import { linkSync, mkdtempSync, readdirSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { parseAircraft } from '../../src/core/aircraft.js';
import { parseCard, type CardPoint, type TestCard } from '../../src/core/card.js';
import { createFrameEngine } from '../../src/core/frame-engine.js';
import { createTestPointTracker } from '../../src/core/test-point.js';
import { parseFrameLine } from '../../src/decode/frame-line.js';
import { runCli } from '../helpers/run-cli.js';
import { DEMO_AIRFRAME_PATH } from '../helpers/airframes.js';

const dir = mkdtempSync(join(tmpdir(), 'card-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const demo = (() => {
  const r = parseAircraft(JSON.parse(readFileSync(DEMO_AIRFRAME_PATH, 'utf8')), 'demo');
  if (!r.ok) throw new Error('demo airframe');
  return r.value;
})();

describe('turnmargin card', () => {
  it('prints a printable card with the cautions, a blank done column and the exclusions', async () => {
    const r = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--altitude', '150']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/planning aid/);
    expect(r.stdout).toMatch(
      /test team's own safety review, build-up rules and the aircraft's approved limits prevail/,
    );
    expect(r.stdout).toMatch(/beyond the warning threshold of any limit/);
    expect(r.stdout).toMatch(/\| done \| id \|/);
    expect(r.stdout).toMatch(/\| ☐ \| P01 \|/);
    expect(r.stdout).toMatch(/## Excluded targets[\s\S]*below 1\.05/);
  });

  it('explains a thrust utilization shown as — (the demo motor cannot hold level flight at 23.5 m/s)', async () => {
    const r = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--altitude', '150']);
    expect(r.code, r.stderr).toBe(0);
    // P01 at 23.5 m/s: T = η·P/V·σ = 0.6·240/23.5·0.986 = 6.04 N below the 1-g drag 7.0 N (D = q·S·(CD0 + k·CL²),
    // Anderson, Aircraft Performance and Design, ch. 2), so no level flight, let alone a turn, is sustainable.
    expect(r.stdout).toMatch(/\| P01 \| 0\.5 \| 23\.5 \|[^\n]*\| — \|[^\n]*no \(speed bleeds\)/);
    expect(r.stdout).toMatch(/A thrust of — : full thrust cannot\nhold even level flight at that speed/);
  });

  it('gives {conditions, points, excluded} in JSON and one CSV row per point', async () => {
    const json = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--altitude', '150', '--format', 'json']);
    expect(json.code, json.stderr).toBe(0);
    const card = JSON.parse(json.stdout) as TestCard;
    expect(Object.keys(card)).toEqual(['conditions', 'points', 'excluded']);
    expect(Object.keys(card.points[0]!)).toEqual([
      'id',
      'step',
      'tas_mps',
      'bank_deg',
      'load_factor',
      'hold_s',
      'tolerance',
      'predicted',
    ]);
    expect(Object.keys(card.points[0]!.predicted)).toEqual(['utilization', 'sustained', 'dvdt_mps2']);
    const csv = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--altitude', '150', '--format', 'csv']);
    const lines = csv.stdout.trim().split('\n');
    expect(lines).toHaveLength(card.points.length + 1);
    expect(lines[1]!.split(',')[0]).toBe('P01');
  });

  it('refuses an existing --out file without --force, and a step of 1', async () => {
    const out = join(dir, 'exists.json');
    writeFileSync(out, 'keep me');
    const r = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json', '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/exists; give --force/);
    expect(readFileSync(out, 'utf8')).toBe('keep me');
    const forced = await runCli([
      'card',
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--format',
      'json',
      '--out',
      out,
      '--force',
    ]);
    expect(forced.code, forced.stderr).toBe(0);
    expect(parseCard(JSON.parse(readFileSync(out, 'utf8')), 'exists.json').ok).toBe(true);
    const step = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--steps', '0.5,1']);
    expect(step.code).toBe(2);
    expect(step.stderr).toMatch(/--steps must be fractions above 0 and below 1/);
  });
});

it('never writes --out over the airframe file, not even through a symbolic or hard link with --force', async () => {
  const airframe = join(dir, 'airframe-kept.json');
  const original = readFileSync(DEMO_AIRFRAME_PATH, 'utf8');
  writeFileSync(airframe, original);
  const soft = join(dir, 'soft-link.json');
  const hard = join(dir, 'hard-link.json');
  symlinkSync(airframe, soft);
  linkSync(airframe, hard);
  for (const out of [airframe, soft, hard]) {
    const r = await runCli(['card', '--aircraft', airframe, '--format', 'json', '--out', out, '--force']);
    expect(r.code, out).toBe(2);
    expect(r.stderr).toMatch(/is the --aircraft file.*would destroy it/);
    expect(readFileSync(airframe, 'utf8')).toBe(original);
  }
});

it('refuses a missing directory, a directory and an empty name for --out, and leaves no temporary file', async () => {
  const missing = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--out', join(dir, 'nowhere', 'c.json')]);
  expect(missing.code).toBe(2);
  expect(missing.stderr).toMatch(/no such directory/);
  const directory = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--out', dir]);
  expect(directory.code).toBe(2);
  expect(directory.stderr).toMatch(/is a directory/);
  const empty = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--out', '']);
  expect(empty.code).toBe(2);
  const written = join(dir, 'fresh-card.md');
  const ok = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--out', written]);
  expect(ok.code, ok.stderr).toBe(0);
  expect(readFileSync(written, 'utf8')).toMatch(/^# Turn test card/);
  expect(readdirSync(dir).filter((f) => f.includes('fresh-card') && f !== 'fresh-card.md')).toEqual([]);
});

describe('simulate --card', () => {
  it('flies every point of a card whose points are all reachable, and the test-point tracker finds them achieved', async () => {
    const cardPath = join(dir, 'reachable.json');
    const made = await runCli([
      'card',
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--altitude',
      '150',
      '--speeds',
      '15,18',
      '--steps',
      '0.5,0.7',
      '--format',
      'json',
      '--out',
      cardPath,
    ]);
    expect(made.code, made.stderr).toBe(0);
    const card = JSON.parse(readFileSync(cardPath, 'utf8')) as TestCard;
    expect(card.points).toHaveLength(4);
    // The premise: every point is a sustainable turn at these conditions (full thrust covers the drag of the turn).
    expect(card.points.every((p: CardPoint) => p.predicted.sustained)).toBe(true);

    const framesPath = join(dir, 'reachable.ndjson');
    const sim = await runCli(['simulate', '--aircraft', DEMO_AIRFRAME_PATH, '--card', cardPath, '--out', framesPath]);
    expect(sim.code, sim.stderr).toBe(0);
    const lines = readFileSync(framesPath, 'utf8').trim().split('\n');
    const points = createTestPointTracker(card.points);
    // The one frame engine decides what a break is; the tracker hears of each one.
    const engine = createFrameEngine(demo, {}, { dataBreak: () => points.breakHere() });
    points.startFile('reachable.ndjson');
    const segments = new Set<string>();
    for (const line of lines) {
      const verdict = parseFrameLine(line);
      expect(verdict.ok).toBe(true);
      if (!verdict.ok) continue;
      segments.add((JSON.parse(line) as { segment: string }).segment);
      const rec = engine.push(verdict.frame);
      expect(rec).not.toBeNull();
      if (rec) points.push(rec);
    }
    expect([...segments]).toEqual(card.points.map((p) => p.id));
    const results = points.results();
    for (const r of results) {
      expect(r.status, r.id).toBe('achieved');
      expect(r.longest_hold_s).toBeGreaterThanOrEqual(r.hold_s);
      // Flown where the card asked: the measured means lie inside the tolerances around the targets.
      expect(Math.abs(r.measured!.bank_deg_mean - r.bank_deg)).toBeLessThan(r.tolerance.bank_deg);
      expect(Math.abs(r.measured!.tas_mps_mean - r.tas_mps)).toBeLessThan(r.tolerance.tas_mps);
      expect(Math.abs(r.measured!.load_factor_mean - r.load_factor)).toBeLessThan(0.1);
    }

    // The same through the commands: review --card reports every point achieved, check --require-points passes.
    const review = await runCli([
      'review',
      framesPath,
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--card',
      cardPath,
      '--format',
      'json',
    ]);
    expect(review.code, review.stderr).toBe(0);
    const reported = (JSON.parse(review.stdout) as { test_points: Array<{ id: string; status: string; file: string }> })
      .test_points;
    expect(reported.map((p) => [p.id, p.status, p.file])).toEqual(
      card.points.map((p) => [p.id, 'achieved', 'reachable.ndjson']),
    );
    const check = await runCli([
      'check',
      framesPath,
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--card',
      cardPath,
      '--require-points',
    ]);
    expect(check.code, check.stdout + check.stderr).toBe(0);
    expect(check.stdout).toMatch(/test points: 4 of 4 achieved/);
  });

  it('check --require-points fails when a point of the card was not achieved', async () => {
    // 23.5 m/s is beyond the demo airframe's top speed in level flight: the point cannot be reached.
    const cardPath = join(dir, 'too-fast.json');
    const args = ['--aircraft', DEMO_AIRFRAME_PATH, '--altitude', '150', '--speeds', '18,23.5', '--steps', '0.5'];
    expect((await runCli(['card', ...args, '--format', 'json', '--out', cardPath])).code).toBe(0);
    const framesPath = join(dir, 'too-fast.ndjson');
    expect(
      (await runCli(['simulate', '--aircraft', DEMO_AIRFRAME_PATH, '--card', cardPath, '--out', framesPath])).code,
    ).toBe(0);
    const check = await runCli([
      'check',
      framesPath,
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--card',
      cardPath,
      '--require-points',
    ]);
    expect(check.code).toBe(1);
    expect(check.stdout).toMatch(/test points: 1 of 2 achieved/);
    expect(check.stdout).toMatch(/P01 \(55\.2° at 23\.5 m\/s\): (partial|not flown)/);
    const without = await runCli(['check', framesPath, '--aircraft', DEMO_AIRFRAME_PATH, '--card', cardPath]);
    expect(without.code).toBe(0);
    const usage = await runCli(['check', framesPath, '--aircraft', DEMO_AIRFRAME_PATH, '--require-points']);
    expect(usage.code).toBe(2);
  });

  it('refuses a malformed card with every problem listed, and warns about a card made for another mass', async () => {
    const bad = join(dir, 'bad.json');
    writeFileSync(bad, JSON.stringify({ conditions: { aircraft: 'x' }, points: [{ id: 'P01', bank_deg: 100 }] }));
    const r = await runCli([
      'simulate',
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--card',
      bad,
      '--out',
      join(dir, 'no.ndjson'),
    ]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/bad\.json: conditions\.mass_kg is required/);
    expect(r.stderr).toMatch(/bad\.json: points\[0\]\.bank_deg must be a number from 0 to 85/);
    expect(r.stderr).toMatch(/bad\.json: points\[0\]\.tas_mps is required/);
    expect(r.stderr).toMatch(/bad\.json: excluded is required/);

    const heavy = join(dir, 'heavy.json');
    const made = await runCli([
      'card',
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--mass',
      '4.6',
      '--speeds',
      '18',
      '--format',
      'json',
      '--out',
      heavy,
    ]);
    expect(made.code, made.stderr).toBe(0);
    const sim = await runCli(['simulate', '--aircraft', DEMO_AIRFRAME_PATH, '--card', heavy, '--quiet']);
    expect(sim.code, sim.stderr).toBe(0);
    expect(sim.stderr).toMatch(/warning: heavy\.json: the card was made for 4\.6 kg, not 4\.2 kg/);
    // The simulator flies the card's mass.
    expect(sim.stdout.split('\n')[0]).toMatch(/"mass_kg":4\.6/);
  });
});

describe('conditions options of card and envelope', () => {
  it('are one spec: the same words, units and defaults in both helps, and the same refusals', async () => {
    const options = /^\s+(--(?:altitude|isa-dev|oat|mass) \S+)\s+(.*)$/;
    const lines = (help: string) =>
      help
        .split('\n')
        .map((l) => options.exec(l))
        .filter((m) => m !== null)
        .map((m) => `${m[1]} ${m[2]}`);
    const [card, envelope] = await Promise.all([runCli(['card', '--help']), runCli(['envelope', '--help'])]);
    expect(lines(card.stdout)).toHaveLength(4);
    expect(lines(envelope.stdout)).toEqual(lines(card.stdout));
    expect(lines(card.stdout)).toContain('--isa-dev K temperature deviation from ISA (unit: K (= °C); default: 0)');
    for (const command of ['card', 'envelope']) {
      const both = await runCli([command, '--aircraft', DEMO_AIRFRAME_PATH, '--isa-dev', '5', '--oat', '10']);
      expect(both.code).toBe(2);
      expect(both.stderr).toContain('give --isa-dev or --oat, not both');
    }
  });
});
