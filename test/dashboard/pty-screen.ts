/** A program run in a real pseudo-terminal (node-pty) whose output feeds a headless terminal emulator. */
import { fileURLToPath } from 'node:url';
import * as pty from 'node-pty';
import xtermHeadless from '@xterm/headless';
import { expect } from 'vitest';

const { Terminal } = xtermHeadless;

export interface PtyScreen {
  /** The visible screen as text, one line per row (trailing spaces trimmed). */
  text(): Promise<string>;
  /** Row `i` of the visible screen, untrimmed. */
  row(i: number): Promise<string>;
  /** Which buffer is shown: the alternate one while a full-screen program runs. */
  bufferType(): 'normal' | 'alternate';
  /** Every byte the program wrote. */
  raw(): string;
  write(keys: string): void;
  resize(cols: number, rows: number): void;
  exited: Promise<{ exitCode: number; signal?: number }>;
  kill(): void;
}

export function runInPty(
  file: string,
  args: string[],
  opts: { cols: number; rows: number; env?: Record<string, string>; cwd?: string; termName?: string },
): PtyScreen {
  const term = new Terminal({ cols: opts.cols, rows: opts.rows, allowProposedApi: true });
  const env: Record<string, string> = {};
  for (const [k, v] of Object.entries(process.env)) if (v !== undefined) env[k] = v;
  delete env['NO_COLOR'];
  delete env['FORCE_COLOR'];
  Object.assign(env, { LANG: 'C.UTF-8', LC_ALL: 'C.UTF-8' }, opts.env ?? {});
  const child = pty.spawn(file, args, {
    name: opts.termName ?? 'xterm-256color',
    cols: opts.cols,
    rows: opts.rows,
    env,
    cwd: opts.cwd ?? process.cwd(),
  });
  let raw = '';
  child.onData((d) => {
    raw += d;
    term.write(d);
  });
  const exited = new Promise<{ exitCode: number; signal?: number }>((resolve) => child.onExit((e) => resolve(e)));
  const flush = () => new Promise<void>((r) => term.write('', r));
  const line = (i: number, trim: boolean): string => {
    const b = term.buffer.active;
    return b.getLine(b.viewportY + i)?.translateToString(trim) ?? '';
  };
  return {
    async text() {
      await flush();
      return Array.from({ length: term.rows }, (_, i) => line(i, true)).join('\n');
    },
    async row(i) {
      await flush();
      return line(i, false);
    },
    bufferType: () => term.buffer.active.type,
    raw: () => raw,
    write: (keys) => child.write(keys),
    resize(cols, rows) {
      child.resize(cols, rows);
      term.resize(cols, rows);
    },
    exited,
    kill() {
      try {
        child.kill();
      } catch {
        // already gone
      }
    },
  };
}

/** Braille cells (U+2800…U+28FF) on a screen: how much of the n–V plane is drawn. */
export function brailleCount(text: string): number {
  return Array.from(text).filter((c) => c >= '\u2801' && c <= '\u28ff').length;
}

/** SGR parameters that set a colour (foreground, background, 256/true colour), ignoring resets to default (39/49). */
export function colourCodes(raw: string): string[] {
  const found: string[] = [];
  for (const m of raw.matchAll(/\x1b\[([0-9;]*)m/g)) {
    const params = m[1]!
      .split(';')
      .filter((p) => p !== '')
      .map(Number);
    for (const p of params) {
      if (
        (p >= 30 && p <= 37) ||
        (p >= 40 && p <= 47) ||
        (p >= 90 && p <= 97) ||
        (p >= 100 && p <= 107) ||
        p === 38 ||
        p === 48
      ) {
        found.push(m[0]);
        break;
      }
    }
  }
  return found;
}

export const ROOT = fileURLToPath(new URL('../..', import.meta.url));
export const POLL = { timeout: 10_000, interval: 50 };

/**
 * `turnmargin replay` of the dashboard fixture flight at ×4 (test/fixtures/dashboard-flight.ndjson, example
 * airframe): level at 20 m/s for 5 s, then slowing and banking into a 56° turn at 12.3 m/s, 123 m, held to the end
 * at 8 s — stall utilization ≈ 0.93, past the 0.90 warning threshold. When the file ends the source stops.
 */
export function replayFixture(cols: number, rows: number, env: Record<string, string> = {}): PtyScreen {
  const args = [
    'dist/src/cli/main.js',
    'replay',
    'test/fixtures/dashboard-flight.ndjson',
    '--aircraft',
    'test/fixtures/example-airframe.json',
    '--speed',
    '4',
  ];
  return runInPty(process.execPath, args, { cols, rows, env, cwd: ROOT });
}

/** Press q (or Ctrl-C): the program exits 0 and leaves the terminal as it found it. */
export async function quitAndCheckRestored(screen: PtyScreen, key: 'q' | 'ctrl-c' = 'q'): Promise<void> {
  screen.write(key === 'q' ? 'q' : '\x03');
  const { exitCode } = await screen.exited;
  expect(exitCode).toBe(0);
  // Back on the normal screen, where the link summary is printed after the dashboard has gone. The last bytes
  // from the pty may reach the emulator after the exit event on a loaded machine, hence the polls.
  await expect.poll(async () => (await screen.text(), screen.bufferType()), POLL).toBe('normal');
  await expect.poll(() => screen.text(), POLL).toMatch(/link summary — file .*dashboard-flight\.ndjson/);
  expect(screen.raw()).toContain('\x1b[?1049l'); // left the alternate screen
  expect(screen.raw()).toMatch(/\x1b\[\?25h/); // cursor shown again
}

/** Terminal bells rung (BEL outside of OSC sequences such as the window title, which BEL also terminates). */
export function bellCount(raw: string): number {
  return raw.replace(/\x1b\][^\x07\x1b]*(?:\x07|\x1b\\)/g, '').split('\x07').length - 1;
}

/** Foreground colours set by SGR sequences, skipping the 256/true-colour forms (38;5;n, 38;2;r;g;b). */
export function foregroundCodes(raw: string): number[] {
  const found: number[] = [];
  for (const m of raw.matchAll(/\x1b\[([0-9;]*)m/g)) {
    const params = m[1]!.split(';').map((p) => (p === '' ? 0 : Number(p)));
    for (let i = 0; i < params.length; i++) {
      const p = params[i]!;
      if (p === 38 || p === 48) {
        i += params[i + 1] === 5 ? 2 : 4;
        continue;
      }
      if ((p >= 30 && p <= 37) || (p >= 90 && p <= 97)) found.push(p);
    }
  }
  return found;
}
