/**
 * The dashboard end to end: `turnmargin replay` of the fixture flight in a real pseudo-terminal, read back through
 * a headless terminal emulator (see replayFixture in pty-screen.ts for the flight).
 */
import { afterEach, describe, expect, it } from 'vitest';
import {
  POLL,
  bellCount,
  brailleCount,
  colourCodes,
  quitAndCheckRestored,
  replayFixture,
  type PtyScreen,
} from './pty-screen.js';

let running: PtyScreen | undefined;
afterEach(() => running?.kill());

describe.each([
  [80, 24],
  [120, 40],
])('the dashboard at %i×%i', (cols, rows) => {
  it('draws the envelope, follows the replayed frames, raises the warning, marks stale data and quits cleanly', async () => {
    const screen = (running = replayFixture(cols, rows));

    // The envelope and its labels, while the flight is still level and normal.
    await expect.poll(() => screen.text(), POLL).toMatch(/NORMAL — inside the envelope/);
    const first = await screen.text();
    expect(brailleCount(first)).toBeGreaterThan(100);
    for (const label of ['stall', 'thrust', 'n limit 3.8', 'TAS m/s', 'n g']) expect(first).toContain(label);
    expect(first).toContain('Margins to the limits');
    expect(first).toMatch(/Advisory only/);
    expect(first).toMatch(/q quit/);

    // Crossing the stall warning threshold: the word in the banner with the limit.
    await expect.poll(() => screen.text(), POLL).toMatch(/▲ WARNING ▲ STALL 9\d %/);
    // The source stops at the end of the file: after 1 s the data are marked stale; the last frame stays shown.
    await expect.poll(() => screen.text(), POLL).toMatch(/STALE DATA — no frame for/);
    const stale = await screen.text();
    expect(stale).toMatch(/Readouts — STALE/);
    expect(stale).toMatch(/◀ STALE/);
    expect(stale).toContain('TAS  12.3 m/s');
    expect(stale).toContain('alt  123 m');
    expect(stale).toContain('bank 56.0°');
    expect(stale).toMatch(/n {4}1\.79 vs 1\/cos φ 1\.79/); // 1/cos 56° = 1.788
    expect(stale).toMatch(/STALL +WARN/); // WARN in the narrow list at 80×24, WARNING on wider screens
    expect(stale).toMatch(/Exceedances \(2\)/);
    expect(stale).toMatch(/ENDED/);
    expect(colourCodes(screen.raw()).length).toBeGreaterThan(0); // in colour unless NO_COLOR (see the keys test)
    expect(bellCount(screen.raw())).toBe(1); // the bell rang once, for the new warning

    await quitAndCheckRestored(screen);
  });
});
