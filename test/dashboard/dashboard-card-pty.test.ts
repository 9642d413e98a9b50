/**
 * A test card on the dashboard end to end: `turnmargin card` plans a card for the example airframe, a short flight
 * flies its first point, and `turnmargin replay --card` runs in a real pseudo-terminal read back through a headless
 * terminal emulator at 80×24.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import type { TestCard } from '../../src/core/card.js';
import { runCli } from '../helpers/run-cli.js';
import { POLL, ROOT, runInPty, type PtyScreen } from './pty-screen.js';

const dir = mkdtempSync(join(tmpdir(), 'dash-card-'));
let running: PtyScreen | undefined;
afterEach(() => running?.kill());
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const AIRFRAME = 'test/fixtures/example-airframe.json';

/** Frames at 20/s: level at the point's speed for 1 s, then its bank for 4 s (longer than its 3 s hold), then level. */
function flightOfFirstPoint(card: TestCard): string {
  const p = card.points[0]!;
  const lines: string[] = [];
  for (let i = 0; i <= 120; i++) {
    const t = i * 0.05;
    const bank = t >= 1 && t <= 5 ? p.bank_deg : 0;
    lines.push(JSON.stringify({ t_s: Number(t.toFixed(2)), tas_mps: p.tas_mps, alt_m: 100, bank_deg: bank }));
  }
  return lines.join('\n') + '\n';
}

describe('the dashboard with a test card', () => {
  it('shows the next point with its hold timer, marks it achieved, moves on, and steps with n and p', async () => {
    const cardPath = join(dir, 'card.json');
    const made = await runCli([
      'card',
      '--aircraft',
      AIRFRAME,
      '--altitude',
      '100',
      '--speeds',
      '18,16',
      '--steps',
      '0.5',
      '--format',
      'json',
      '--out',
      cardPath,
    ]);
    expect(made.code, made.stderr).toBe(0);
    const card = JSON.parse(readFileSync(cardPath, 'utf8')) as TestCard;
    expect(card.points.map((p) => p.id)).toEqual(['P01', 'P02']);
    const flightPath = join(dir, 'flight.ndjson');
    writeFileSync(flightPath, flightOfFirstPoint(card));

    const args = ['dist/src/cli/main.js', 'replay', flightPath, '--aircraft', AIRFRAME, '--card', cardPath];
    const screen = (running = runInPty(process.execPath, args, { cols: 80, rows: 24, cwd: ROOT }));
    const bank = `${card.points[0]!.bank_deg.toFixed(1)}°`;
    await expect.poll(() => screen.text(), POLL).toMatch(/Test point P01 · 0\/2 achieved/);
    expect(await screen.text()).toContain(`bank ${bank}`);
    // While the point is held: the timer counts towards the hold time.
    await expect.poll(() => screen.text(), POLL).toMatch(/held [12]\.\d of 3\.0 s/);
    // Achieved: counted, marked, and the next point is shown.
    await expect.poll(() => screen.text(), POLL).toMatch(/Test point P02 · 1\/2 achieved/);
    expect(await screen.text()).toMatch(/✓▸·/);
    expect(await screen.text()).toMatch(/n p point/);

    screen.write('p');
    await expect.poll(() => screen.text(), POLL).toMatch(/Test point P01 · 1\/2 achieved/);
    // Still held (the timer past the hold time) or held no longer (the longest hold).
    expect(await screen.text()).toMatch(/held [34]\.\d of 3\.0 s ACHIEVED|ACHIEVED · held [34]\.\d s/);
    expect(await screen.text()).toMatch(/▸✓·/);
    screen.write('n');
    await expect.poll(() => screen.text(), POLL).toMatch(/Test point P02 · 1\/2 achieved/);

    // The whole screen stays inside 80×24 and the other panels are still there.
    const text = await screen.text();
    for (const l of text.split('\n')) expect(Array.from(l).length).toBeLessThanOrEqual(80);
    for (const panel of ['Margins to the limits', 'Readouts', 'Exceedances', 'Link:', 'Advisory only'])
      expect(text).toContain(panel);
    screen.write('q');
    expect((await screen.exited).exitCode).toBe(0);
  });
});
