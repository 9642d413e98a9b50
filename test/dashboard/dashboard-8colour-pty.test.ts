/**
 * On an 8-colour terminal (TERM=xterm: terminfo max_colors 8) grey does not exist and blessed reduces it to black;
 * the dashboard must draw no text in black there (SGR 30), in any state the replay goes through.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { POLL, ROOT, foregroundCodes, quitAndCheckRestored, runInPty, type PtyScreen } from './pty-screen.js';

let running: PtyScreen | undefined;
afterEach(() => running?.kill());

describe('the dashboard on an 8-colour terminal', () => {
  it('draws no text in black through normal, warning and stale states', async () => {
    const args = [
      'dist/src/cli/main.js',
      'replay',
      'test/fixtures/dashboard-flight.ndjson',
      '--aircraft',
      'test/fixtures/example-airframe.json',
      '--speed',
      '4',
    ];
    const screen = (running = runInPty(process.execPath, args, { cols: 80, rows: 24, cwd: ROOT, termName: 'xterm' }));
    await expect.poll(() => screen.text(), POLL).toMatch(/NORMAL — inside the envelope/);
    await expect.poll(() => screen.text(), POLL).toMatch(/▲ WARNING ▲ STALL/);
    await expect.poll(() => screen.text(), POLL).toMatch(/STALE DATA/);
    const codes = foregroundCodes(screen.raw());
    expect(codes.length).toBeGreaterThan(0); // still in colour
    expect(codes).not.toContain(30);
    expect(codes.filter((c) => c >= 90)).toEqual([]); // no bright colours either: the terminal has none
    await quitAndCheckRestored(screen);
  });
});
