/**
 * The dashboard's keys and terminal handling end to end, in a real pseudo-terminal read back through a headless
 * terminal emulator (see replayFixture in pty-screen.ts for the flight).
 */
import { afterEach, describe, expect, it } from 'vitest';
import {
  POLL,
  bellCount,
  ROOT,
  brailleCount,
  colourCodes,
  quitAndCheckRestored,
  replayFixture,
  runInPty,
  type PtyScreen,
} from './pty-screen.js';

let running: PtyScreen | undefined;
afterEach(() => running?.kill());

describe('the dashboard keys and terminal handling', () => {
  it('switches units, shows all keys, pauses, and redraws on resize', async () => {
    const screen = (running = replayFixture(80, 24));
    await expect.poll(() => screen.text(), POLL).toMatch(/STALE DATA/);

    screen.write('u');
    await expect.poll(() => screen.text(), POLL).toContain('TAS  23.9 kt'); // 12.3 m/s × 3600/1852
    expect(await screen.text()).toContain('TAS kt');

    screen.write('?');
    await expect.poll(() => screen.text(), POLL).toMatch(/All keys[\s\S]*seek back \/ forward 10 s/);
    screen.write('\x1b');
    await expect.poll(() => screen.text(), POLL).not.toMatch(/All keys/);

    screen.write('+');
    await expect.poll(() => screen.text(), POLL).toMatch(/replay \S+ ×8 /);
    screen.write('-');
    screen.write('-');
    await expect.poll(() => screen.text(), POLL).toMatch(/replay \S+ ×2 /);
    screen.write(' ');
    await expect.poll(() => screen.text(), POLL).toMatch(/replay .* PAUSED/);

    // A bigger window: the panels move to the new size and the plot is drawn wider.
    const before = brailleCount(await screen.text());
    screen.resize(120, 40);
    await expect.poll(async () => (await screen.row(39)).startsWith('Advisory only'), POLL).toBe(true);
    await expect.poll(async () => brailleCount(await screen.text()), POLL).toBeGreaterThan(before * 1.5);
    const wide = await screen.text();
    const marginsRow = wide.split('\n').find((l) => l.includes('Margins to the limits'))!;
    expect(marginsRow.indexOf('Margins')).toBeGreaterThanOrEqual(70);

    await quitAndCheckRestored(screen);
  });

  it('uses no colour under NO_COLOR and still says WARNING and STALE in words; m mutes the bell', async () => {
    const screen = (running = replayFixture(80, 24, { NO_COLOR: '1' }));
    await expect.poll(() => screen.text(), POLL).toMatch(/NORMAL/);
    screen.write('m');
    await expect.poll(() => screen.text(), POLL).toMatch(/bell muted/);
    await expect.poll(() => screen.text(), POLL).toMatch(/STALE DATA/);
    expect(screen.raw()).toContain('WARNING');
    expect(bellCount(screen.raw())).toBe(0);
    expect(colourCodes(screen.raw())).toEqual([]);
    await quitAndCheckRestored(screen, 'ctrl-c');
  });

  it('restores the terminal after an exception and prints the error after it', async () => {
    const screen = (running = runInPty(process.execPath, ['test/dashboard/throwing-entry.mjs'], {
      cols: 80,
      rows: 24,
      cwd: ROOT,
    }));
    const { exitCode } = await screen.exited;
    expect(exitCode).toBe(2);
    await expect.poll(async () => (await screen.text(), screen.bufferType()), POLL).toBe('normal');
    await expect.poll(() => screen.text(), POLL).toContain('turnmargin: unexpected error: Error: planted failure');
    // The error comes after the switch back to the normal screen.
    const raw = screen.raw();
    expect(raw.lastIndexOf('\x1b[?1049l')).toBeLessThan(raw.indexOf('planted failure'));
  });
});
