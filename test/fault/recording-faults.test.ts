/**
 * Recording under faults, end to end with the built CLI: `watch --ws … --record FILE --no-ui` fed at 500 frames/s by
 * a relay in the test process, then killed hard (SIGKILL: at most the last second lost) or asked to stop (SIGTERM:
 * nothing lost); and a recording on a full disk (/dev/full) shown on the dashboard in a real terminal while the
 * monitor keeps running. (The --no-ui stderr report of a full disk is in test/cli/watch-replay.test.ts.)
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { decodeEntry, type RecordingEntry } from '../../src/recording/format.js';
import { FLUSH_INTERVAL_MS } from '../../src/recording/recorder.js';
import { EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';
import { startCliProcess, type CliProcess } from '../helpers/cli-process.js';
import { createPacedRelay, RELAY_NOISE_LINE, type PacedRelay } from '../helpers/paced-ws-relay.js';
import { CLI_PATH, REPO_ROOT } from '../helpers/run-cli.js';
import { runInPty, type PtyScreen } from '../dashboard/pty-screen.js';

const RATE_HZ = 500;
const NOISE_EVERY = 100;
const dir = mkdtempSync(join(tmpdir(), 'tm-fault-rec-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

let cleanup: Array<() => unknown> = [];
afterEach(async () => {
  for (const f of cleanup.reverse()) await f();
  cleanup = [];
});

/** The complete records of a recording (a hard kill may leave a last record without its LF: it is dropped). */
function readRecording(path: string): RecordingEntry[] {
  const text = readFileSync(path);
  const end = text.lastIndexOf(0x0a);
  if (end < 0) return [];
  return text
    .subarray(0, end)
    .toString('latin1')
    .split('\n')
    .map((r) => decodeEntry(Buffer.from(r, 'latin1')));
}

function recordedLines(entries: RecordingEntry[]): Array<Extract<RecordingEntry, { kind: 'line' }>> {
  return entries.filter((e): e is Extract<RecordingEntry, { kind: 'line' }> => e.kind === 'line');
}

const seqOf = (bytes: Buffer): number => (JSON.parse(bytes.toString('utf8')) as { seq: number }).seq;
const isNoise = (bytes: Buffer): boolean => bytes.toString('utf8') === RELAY_NOISE_LINE;

async function streamingWatch(name: string): Promise<{ relay: PacedRelay; watch: CliProcess; recordPath: string }> {
  const relay = createPacedRelay({ rateHz: RATE_HZ, noiseEvery: NOISE_EVERY });
  const port = await relay.listen(0);
  const recordPath = join(dir, `${name}.tmrec`);
  const watch = startCliProcess([
    'watch',
    '--ws',
    `ws://127.0.0.1:${port}`,
    '--aircraft',
    EXAMPLE_AIRFRAME_PATH,
    '--record',
    recordPath,
    '--no-ui',
  ]);
  cleanup.push(
    () => relay.close(),
    () => watch.child.kill('SIGKILL'),
  );
  // About 2 s of stream at 500 frames/s before the signal.
  await expect
    .poll(() => watch.stdoutLinesBy(Date.now()), { timeout: 15_000, interval: 20 })
    .toBeGreaterThanOrEqual(1000);
  return { relay, watch, recordPath };
}

describe('recording under faults', () => {
  it('SIGKILL mid-stream at 500 frames/s loses at most the last second: what was received earlier is all in the file, in order', async () => {
    const { watch, recordPath } = await streamingWatch('killed');
    const killAtMs = Date.now();
    watch.child.kill('SIGKILL');
    const exit = await watch.done;
    expect(exit.signal).toBe('SIGKILL');

    const lines = recordedLines(readRecording(recordPath));
    const frames = lines.filter((l) => !isNoise(l.bytes));
    const seqs = frames.map((l) => seqOf(l.bytes));
    // A prefix of the stream, in order, nothing twice, noise kept verbatim in its place.
    expect(seqs).toEqual(Array.from({ length: seqs.length }, (_, i) => i));
    expect(lines.filter((l) => isNoise(l.bytes))).toHaveLength(Math.floor(seqs.length / NOISE_EVERY));
    // Every frame the monitor had printed more than a second before the kill is in the file: it is recorded before
    // it is judged and printed, and the recorder flushes at least every second.
    const printedBeforeLastSecond = watch.stdoutLinesBy(killAtMs - 1000);
    expect(FLUSH_INTERVAL_MS).toBeLessThanOrEqual(1000);
    expect(printedBeforeLastSecond).toBeGreaterThan(100);
    expect(frames.length).toBeGreaterThanOrEqual(printedBeforeLastSecond);
    // The kill came mid-stream: frames were still arriving in the last second.
    expect(watch.stdout().split('\n').filter(Boolean).length).toBeGreaterThan(printedBeforeLastSecond);
  });

  it('SIGTERM mid-stream at 500 frames/s loses nothing: the file holds every line the monitor received and ends with the stop', async () => {
    const { watch, recordPath } = await streamingWatch('terminated');
    watch.child.kill('SIGTERM');
    const exit = await watch.done;
    expect(exit.code).toBe(0);

    const entries = readRecording(recordPath);
    const lines = recordedLines(entries);
    const frames = lines.filter((l) => !isNoise(l.bytes));
    const seqs = frames.map((l) => seqOf(l.bytes));
    expect(seqs).toEqual(Array.from({ length: seqs.length }, (_, i) => i));
    // Every accepted frame the monitor printed and every line it rejected is in the recording, and nothing else.
    const printed = watch
      .stdout()
      .split('\n')
      .filter(Boolean)
      .map((l) => JSON.parse(l) as { t_s: number });
    const rejected = watch
      .stderr()
      .split('\n')
      .filter((l) => l.startsWith('turnmargin: rejected'));
    expect(frames).toHaveLength(printed.length);
    expect(lines).toHaveLength(printed.length + rejected.length);
    expect(printed.map((r) => r.t_s)).toEqual(seqs.map((s) => Number((s / RATE_HZ).toFixed(6))));
    expect(rejected.every((l) => l.includes('binary noise'))).toBe(true);
    const last = entries.at(-1)!;
    expect(last.kind === 'link' && last.state === 'ended' && last.detail).toBe('monitor stopped');
    expect(watch.stderr()).toMatch(new RegExp(`accepted ${printed.length}, rejected ${rejected.length}`));
  });

  it.skipIf(!existsSync('/dev/full'))(
    'a full disk (recording on /dev/full) is shown on the dashboard while the monitor keeps running, and q still exits cleanly',
    async () => {
      const relay = createPacedRelay({ rateHz: 50 });
      const port = await relay.listen(0);
      const args = [
        CLI_PATH,
        'watch',
        '--ws',
        `ws://127.0.0.1:${port}`,
        '--aircraft',
        EXAMPLE_AIRFRAME_PATH,
        '--record',
        '/dev/full',
        '--force',
      ];
      const screen: PtyScreen = runInPty(process.execPath, args, { cols: 120, rows: 40, cwd: REPO_ROOT });
      cleanup.push(
        () => relay.close(),
        () => screen.kill(),
      );
      const poll = { timeout: 10_000, interval: 50 };

      // In the link panel, and as the error line at the top of the event log.
      await expect.poll(() => screen.text(), poll).toMatch(/REC ERROR recording write failed: disk full/);
      await expect.poll(() => screen.text(), poll).toMatch(/│ERROR recording write failed: disk full/);
      // Still monitoring: the received-line count keeps growing, the link stays live, the point is not stale.
      const linesShown = async (): Promise<number> => Number(/lines (\d+)/.exec(await screen.text())?.[1] ?? -1);
      const before = await linesShown();
      expect(before).toBeGreaterThan(0);
      await expect.poll(linesShown, poll).toBeGreaterThan(before + 50);
      const text = await screen.text();
      expect(text).toMatch(/LIVE/);
      expect(text).not.toMatch(/STALE/);

      screen.write('q');
      expect((await screen.exited).exitCode).toBe(0);
      expect(await screen.text()).toMatch(/recording \/dev\/full: \d+ bytes — recording write failed: disk full/);
    },
  );
});
