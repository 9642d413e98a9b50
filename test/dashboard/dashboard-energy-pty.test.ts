/**
 * Ps, the sustained band, the model advisory and the time to the stall on the dashboard, end to end: `turnmargin
 * replay` of a short flight in a real pseudo-terminal at 80×24 with TERM=xterm (8 colours), read back through a
 * headless terminal emulator.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { POLL, ROOT, foregroundCodes, runInPty, type PtyScreen } from './pty-screen.js';

const dir = mkdtempSync(join(tmpdir(), 'dash-energy-'));
let running: PtyScreen | undefined;
afterEach(() => running?.kill());
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/**
 * The example airframe level at 16 m/s with the throttle full for 4 s — holding its speed and height, so it does less
 * than the model's full-throttle Ps — then at part throttle in a 30° bank slowing by 1.2 m/s² until 9 s.
 */
function flight(): string {
  const lines: string[] = [];
  let tasMps = 16;
  for (let i = 0; i <= 180; i++) {
    const t = i * 0.05;
    const slowing = t > 4;
    if (slowing) tasMps -= 1.2 * 0.05;
    lines.push(
      JSON.stringify({
        t_s: Number(t.toFixed(2)),
        tas_mps: Number(tasMps.toFixed(3)),
        alt_m: 100,
        bank_deg: slowing ? 30 : 0,
        throttle: slowing ? 0.5 : 1,
      }),
    );
  }
  return lines.join('\n') + '\n';
}

describe('the dashboard with energy data', () => {
  it('shows Ps measured and modelled, the band, the model advisory and the time to the stall caution', async () => {
    const path = join(dir, 'flight.ndjson');
    writeFileSync(path, flight());
    const args = ['dist/src/cli/main.js', 'replay', path, '--aircraft', 'test/fixtures/example-airframe.json'];
    const screen = (running = runInPty(process.execPath, args, { cols: 80, rows: 24, cwd: ROOT, termName: 'xterm' }));

    // Full throttle, level and steady: measured Ps 0, the model's positive; the band at n = 1.
    await expect.poll(() => screen.text(), POLL).toMatch(/Ps {3}0\.00 m\/s +model \+\d\.\d\d m\/s/);
    expect(await screen.text()).toMatch(/band \d+\.\d–\d+\.\d m\/s at n 1\.00/);
    await expect.poll(() => screen.text(), POLL).toMatch(/thrust margin may be/);
    // The exceedance panel (bottom left, inside its border) holds the advisory, wrapped.
    const rows = (await screen.text()).split('\n');
    const top = rows.findIndex((r) => r.includes('Exceedances'));
    const advised = rows
      .slice(top + 1, top + 5)
      .map((r) => Array.from(r).slice(1, 43).join('').trim())
      .join(' ');
    expect(advised).toContain(
      'climbing/accelerating less than the model predicts: the thrust margin may be optimistic',
    );
    // Slowing: the prediction in the banner and beside the stall bar, counting down.
    await expect.poll(() => screen.text(), POLL).toMatch(/stall caution in \d\.\d s/);
    expect(await screen.text()).toMatch(/in \d\.\d s│/);
    expect(await screen.text()).toMatch(/model —/); // part throttle: no model

    const text = await screen.text();
    expect(text).not.toMatch(/NaN|undefined/);
    for (const l of text.split('\n')) expect(Array.from(l).length).toBeLessThanOrEqual(80);
    expect(foregroundCodes(screen.raw())).not.toContain(30); // no black text on 8 colours
    screen.write('q');
    expect((await screen.exited).exitCode).toBe(0);
  });
});
