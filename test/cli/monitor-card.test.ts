/** `replay --card` (the monitor's card follower) without the dashboard: the records, the notes and the refusals. */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestCard } from '../../src/core/card.js';
import { runCli } from '../helpers/run-cli.js';

const dir = mkdtempSync(join(tmpdir(), 'monitor-card-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const AIRFRAME = 'test/fixtures/example-airframe.json';
const cardPath = join(dir, 'card.json');
const flightPath = join(dir, 'flight.ndjson');
let card: TestCard;

beforeAll(async () => {
  const made = await runCli(
    ['card', '--aircraft', AIRFRAME, '--speeds', '18,16', '--steps', '0.5', '--format', 'json', '--out', cardPath],
    {},
  );
  expect(made.code, made.stderr).toBe(0);
  card = JSON.parse(readFileSync(cardPath, 'utf8')) as TestCard;
  const p = card.points[0]!;
  const lines: string[] = [];
  // Level for 1 s, P01's bank at its speed for 4 s, level again: P01 held for 4 s (its hold time is 3 s).
  for (let i = 0; i <= 120; i++) {
    const t = i * 0.05;
    lines.push(
      JSON.stringify({
        t_s: Number(t.toFixed(2)),
        tas_mps: p.tas_mps,
        alt_m: 100,
        bank_deg: t >= 1 && t <= 5 ? p.bank_deg : 0,
      }),
    );
  }
  writeFileSync(flightPath, lines.join('\n') + '\n');
});

describe('replay --card --no-ui', () => {
  it('prints the same margin records as without a card, and notes each point achieved on stderr', async () => {
    const plain = await runCli(['replay', flightPath, '--aircraft', AIRFRAME, '--speed', '0', '--no-ui']);
    const withCard = await runCli([
      'replay',
      flightPath,
      '--aircraft',
      AIRFRAME,
      '--speed',
      '0',
      '--no-ui',
      '--card',
      cardPath,
    ]);
    expect(plain.code, plain.stderr).toBe(0);
    expect(withCard.code, withCard.stderr).toBe(0);
    expect(withCard.stdout).toBe(plain.stdout);
    expect(withCard.stdout.trim().split('\n')).toHaveLength(121);
    // Held from t 1.00 s: achieved once the hold reaches 3 s, announced once.
    const notes = withCard.stderr.split('\n').filter((l) => l.includes('test point'));
    expect(notes).toHaveLength(1);
    expect(notes[0]).toMatch(/^turnmargin: test point P01 achieved: held 3\.0 s from t 1\.00 s/);
    expect(plain.stderr).not.toContain('test point');
  });

  it('warns when the card was made for another airframe', async () => {
    const other = join(dir, 'other.json');
    writeFileSync(other, JSON.stringify({ ...card, conditions: { ...card.conditions, aircraft: 'Another airframe' } }));
    const r = await runCli(['replay', flightPath, '--aircraft', AIRFRAME, '--speed', '0', '--no-ui', '--card', other]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(
      /warning: other\.json: the card was made for "Another airframe", not for "Example airframe"/,
    );
  });

  it('refuses a malformed card before the replay starts, listing every problem', async () => {
    const bad = join(dir, 'bad.json');
    const points = card.points.map((p, i) => (i === 0 ? { ...p, hold_s: -1 } : { ...p, tolerance: undefined }));
    writeFileSync(bad, JSON.stringify({ ...card, points }));
    const r = await runCli(['replay', flightPath, '--aircraft', AIRFRAME, '--no-ui', '--card', bad]);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(/bad\.json: points\[0\]\.hold_s/);
    expect(r.stderr).toMatch(/bad\.json: points\[1\]\.tolerance/);
  });

  it('lists --card in the help of watch, replay and demo', async () => {
    for (const command of ['watch', 'replay', 'demo']) {
      const r = await runCli([command, '--help']);
      expect(r.stdout).toMatch(/--card (FILE|CARD\.json)/);
    }
  });
});
