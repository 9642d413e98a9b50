/** `turnmargin demo` (npm start): the bundled invented demo on the dashboard, or JSON lines without a terminal. */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { findReplaysDir } from '../../src/cli/commands/demo.js';
import { POLL, ROOT, brailleCount, runInPty, type PtyScreen } from './pty-screen.js';

let running: PtyScreen | undefined;
afterEach(() => running?.kill());

describe('turnmargin demo', () => {
  it('finds the bundled replays/ folder from the source tree', () => {
    expect(findReplaysDir()).toBe(join(ROOT, 'replays'));
  });

  it('without a terminal says so and prints one pass of the demo flight as margin records', () => {
    const out = spawnSync(process.execPath, ['dist/src/cli/main.js', 'demo'], {
      cwd: ROOT,
      encoding: 'utf8',
      timeout: 20_000,
      maxBuffer: 64 * 1024 * 1024, // the records of the whole demo flight pass spawnSync's 1 MiB default
    });
    expect(out.status).toBe(0);
    expect(out.stderr).toMatch(/stdout is not a terminal, so no dashboard/);
    expect(out.stderr).toMatch(/npm start/);
    const records = out.stdout
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l) as { t_s: number; level: string });
    const frames = readFileSync(join(ROOT, 'replays/demo-flight.ndjson'), 'utf8').trim().split('\n').length;
    expect(records.length).toBe(frames); // every demo frame is valid and appears once (no loop without a terminal)
    // The demo holds at least one caution on purpose (replays/README.md).
    expect(records.some((r) => r.level !== 'normal')).toBe(true);
  });

  it('in a terminal shows the dashboard on the invented demo airframe, with the replay keys, and quits with q', async () => {
    const screen = (running = runInPty(process.execPath, ['dist/src/cli/main.js', 'demo', '--speed', '8'], {
      cols: 100,
      rows: 30,
      cwd: ROOT,
    }));
    await expect.poll(() => screen.text(), POLL).toMatch(/Demo survey UAV \(invented\)/);
    await expect.poll(async () => brailleCount(await screen.text()), POLL).toBeGreaterThan(100);
    await expect.poll(() => screen.text(), POLL).toMatch(/replay \d+:\d\d\.\d\/\d+:\d\d\.\d ×8/);
    expect(await screen.text()).toContain('space pause');
    screen.write('q');
    expect((await screen.exited).exitCode).toBe(0);
    await expect.poll(async () => (await screen.text(), screen.bufferType()), POLL).toBe('normal');
  });
});
