/**
 * The dashboard under a 1 kHz stream (test/dashboard/flood-entry.mjs feeds the built dashboard directly), in a real
 * pseudo-terminal read back through a headless terminal emulator. No timing asserts: speed targets live in perf.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { POLL, ROOT, runInPty, type PtyScreen } from './pty-screen.js';

let running: PtyScreen | undefined;
afterEach(() => running?.kill());

describe('a 1 kHz stream', () => {
  it('keeps the screen on the newest record and the keys working while records pour in', async () => {
    const screen = (running = runInPty(process.execPath, ['test/dashboard/flood-entry.mjs'], {
      cols: 80,
      rows: 24,
      cwd: ROOT,
    }));
    await expect.poll(() => screen.text(), POLL).toMatch(/TAS {2}1\d\.\d m\/s/);
    screen.write('u'); // while the stream runs
    await expect.poll(() => screen.text(), POLL).toContain('TAS kt');
    // The last record: t = 2.999 s at 25 m/s raw; the TAS shown is smoothed (τ 0.15 s), which lags a ramp of
    // 10/2.999 m/s² by about rate·τ = 0.50 m/s (first-order lag to a ramp, textbook): 24.50 m/s = 47.6 kt.
    await expect.poll(() => screen.text(), POLL).toContain('TAS  47.6 kt');
    expect(await screen.text()).toMatch(/Readouts · t 0:03\.0/);
    screen.write('q');
    expect((await screen.exited).exitCode).toBe(0);
    expect(await screen.text()).toContain('flood entry: 3000 records pushed');
  });
});
