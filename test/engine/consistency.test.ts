/**
 * One flight through every path — `replay --no-ui --events`, `review` in the main thread, `review` through the
 * worker, and `serve` — gives the same margin records and the same limit events, field by field. The flight is a
 * recording with a gap over 1 s, bad lines, a `#link` lost/open pair and a restart of the sender's clock; the
 * expected events are worked out by hand from the thresholds (stall caution 0.80, warning 0.90, hysteresis 0.02:
 * the defaults, common practice) and the break rules.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { eventJson } from '../../src/report/review-report.js';
import { createServeSession } from '../../src/serve/session.js';
import { EXAMPLE_AIRFRAME_PATH, exampleAirframe } from '../helpers/airframes.js';
import { startCliProcess } from '../helpers/cli-process.js';
import { runCli } from '../helpers/run-cli.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-consistency-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// At 12 m/s TAS, sea level ISA, the example airframe's n_stall = q·S·CLmax/W = 88.2·0.55·1.2/31.381 = 1.85499
// (hand computation; Anderson ch. 6 relation). Stall utilization u ↔ nz = u·1.85499.
const N_STALL_12 = 1.85499;
const T0_MS = Date.UTC(2026, 4, 4, 10, 0, 0);

const frameText = (tS: number, u: number): string =>
  JSON.stringify({ t_s: tS, tas_mps: 12, alt_m: 0, nz: Number((u * N_STALL_12).toFixed(6)) });

/** Frames every 0.1 s from fromS to toS inclusive at stall utilization u. */
function stretch(fromS: number, toS: number, u: number): string[] {
  const out: string[] = [];
  for (let i = 0; fromS + i * 0.1 <= toS + 1e-9; i++) out.push(frameText(Math.round((fromS + i * 0.1) * 10) / 10, u));
  return out;
}

/** The flight's received lines, before and after the link loss (invented test data, example airframe). */
const beforeLoss = [
  ...stretch(0, 2, 0.95), // both stall alerts on …
  ...stretch(3.5, 5, 0.95), // … a 1.5 s gap, on again …
  ...stretch(5.1, 6, 0.5), // … off at 5.1
  'noise on the radio',
  '{"t_s": 6.05, "tas_mps": "fast", "alt_m": 0, "nz": 1}',
  ...stretch(6.1, 7, 0.95), // on again until the link drops
];
const afterLoss = [
  ...stretch(7.2, 8, 0.95), // on after the reconnect (0.2 s later: not a gap) …
  ...stretch(0, 1.5, 0.95), // … the sender's clock restarts: 0 … 0.3 rejected, 0.4 starts a new segment
];

function recording(): string {
  let ms = T0_MS;
  const line = (text: string): string => `${(ms += 100)}\t${text}`;
  return (
    [
      '#turnmargin-recording 1',
      '#source serial /dev/ttyUSB0 @ 57600',
      `#started ${new Date(T0_MS).toISOString()}`,
      `#link ${T0_MS} open`,
      ...beforeLoss.map(line),
      `#link ${ms + 50} lost port disappeared`,
      `#link ${ms + 150} open`,
      ...afterLoss.map(line),
    ].join('\n') + '\n'
  );
}

// After each break the filter restarts at the raw value, so the alerts come on at the first frame (u 0.95), and
// the first frame at u 0.5 (smoothed 0.95 − 0.45·0.4866 = 0.731, below both thresholds − 0.02) clears them.
const EXPECTED_EVENTS = [
  ['caution', 0, 2, 'data_gap'],
  ['warning', 0, 2, 'data_gap'],
  ['caution', 3.5, 5.1, 'cleared'],
  ['warning', 3.5, 5.1, 'cleared'],
  // Continuous with the frames before (no break): the smoothed n (τ 0.15 s, gain 1 − e^(−0.1/0.15) = 0.4866 per
  // frame) climbs from u 0.5 through 0.719, 0.831 (caution at 6.2), 0.889, 0.919 (warning at 6.4).
  ['caution', 6.2, 7, 'link_lost'],
  ['warning', 6.4, 7, 'link_lost'],
  ['caution', 7.2, 8, 'clock_restart'],
  ['warning', 7.2, 8, 'clock_restart'],
  ['caution', 0.4, 1.5, 'end_of_data'],
  ['warning', 0.4, 1.5, 'end_of_data'],
];

type Json = Record<string, unknown>;
const jsonLines = (text: string): Json[] =>
  text
    .split('\n')
    .filter((l) => l !== '')
    .map((l) => JSON.parse(l) as Json);
const isRecord = (answer: Json): boolean => 'level' in answer && !('error' in answer);

/** Records and events through `serve`: one connection up to the link loss (dropped), a second one after it. */
async function throughServe(): Promise<{ records: Json[]; events: Json[] }> {
  // The events of a serve session stay on the server: they are read from the session module, fed the same way.
  const events: Json[] = [];
  for (const [part, dropped] of [
    [beforeLoss, true],
    [afterLoss, false],
  ] as const) {
    const session = createServeSession(exampleAirframe(), { margins: {} });
    for (const l of part) session.handleMessage(l);
    events.push(...session.finish(dropped).map((e) => eventJson(e) as unknown as Json));
  }
  // The records through the real server, over a loopback websocket.
  const server = startCliProcess(['serve', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--listen', '127.0.0.1:0']);
  try {
    await expect.poll(() => /listening on (\S+)/.exec(server.stdout()), { timeout: 15_000 }).not.toBeNull();
    const url = /listening on (\S+)/.exec(server.stdout())![1]!;
    const records: Json[] = [];
    for (const part of [beforeLoss, afterLoss]) {
      const ws = new WebSocket(url);
      await new Promise<void>((resolve, reject) => {
        ws.once('error', reject);
        ws.once('open', () => resolve());
      });
      const answers: Json[] = [];
      const all = new Promise<void>((resolve) =>
        ws.on('message', (d) => {
          answers.push(JSON.parse(String(d)) as Json);
          if (answers.length === part.length) resolve();
        }),
      );
      for (const l of part) ws.send(l);
      await all;
      ws.close();
      records.push(...answers.filter(isRecord));
    }
    return { records, events };
  } finally {
    server.child.kill('SIGTERM');
    await server.done;
  }
}

describe('one frame engine on every path', () => {
  it('gives the same records and events through replay, review (main thread and worker) and serve', async () => {
    const flight = join(dir, 'flight.tmrec');
    writeFileSync(flight, recording());
    const eventsFile = join(dir, 'events.ndjson');
    const perFrame = join(dir, 'per-frame.ndjson');

    const replay = await runCli(
      ['replay', flight, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--no-ui', '--speed', '0', '--events', eventsFile],
      { timeoutMs: 30_000 },
    );
    expect(replay.code, replay.stderr).toBe(0);
    const main = await runCli(
      ['review', flight, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'json', '--per-frame', perFrame],
      { timeoutMs: 30_000 },
    );
    expect(main.code, main.stderr).toBe(0);
    const worker = await runCli(['review', flight, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'json'], {
      timeoutMs: 30_000,
      env: { TURNMARGIN_REVIEW_WORKER_MIN_BYTES: '0' },
    });
    expect(worker.code, worker.stderr).toBe(0);
    const serve = await throughServe();

    const mainReview = JSON.parse(main.stdout) as { events: Json[]; rejected: number; accepted: number };
    const workerReview = JSON.parse(worker.stdout) as { events: Json[] };

    // The events, worked out by hand: both stall alerts, ended by each kind of break in turn.
    expect(mainReview.events.map((e) => [e['level'], e['start_s'], e['end_s'], e['ended_by']])).toEqual(
      EXPECTED_EVENTS,
    );
    expect(mainReview.events.every((e) => e['limit'] === 'stall')).toBe(true);
    // 2 bad lines and 4 frames of the restarted clock are rejected.
    expect(mainReview.rejected).toBe(6);

    const replayEvents = jsonLines(readFileSync(eventsFile, 'utf8'));
    // The --events file holds each event as it ended: ordered by end, the same set.
    const byStart = (a: Json, b: Json): number =>
      EXPECTED_EVENTS.findIndex((x) => x[1] === a['start_s'] && x[0] === a['level']) -
      EXPECTED_EVENTS.findIndex((x) => x[1] === b['start_s'] && x[0] === b['level']);
    expect([...replayEvents].sort(byStart)).toEqual(mainReview.events);
    expect(workerReview.events).toEqual(mainReview.events);
    expect(serve.events).toEqual(mainReview.events);
    for (const e of replayEvents) expect(Object.keys(e)).toEqual(Object.keys(mainReview.events[0]!));

    const replayRecords = jsonLines(replay.stdout);
    const reviewRecords = jsonLines(readFileSync(perFrame, 'utf8'));
    expect(reviewRecords).toHaveLength(mainReview.accepted);
    expect(replayRecords).toEqual(reviewRecords);
    expect(serve.records).toEqual(reviewRecords);
  }, 90_000);

  it('refuses an existing --events file unless --force is given, like --record', async () => {
    const flight = join(dir, 'short.ndjson');
    writeFileSync(flight, stretch(0, 1, 0.95).join('\n') + '\n');
    const eventsFile = join(dir, 'kept.ndjson');
    writeFileSync(eventsFile, 'earlier events\n');
    const args = [
      'replay',
      flight,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--no-ui',
      '--speed',
      '0',
      '--events',
      eventsFile,
    ];
    const refused = await runCli(args);
    expect(refused.code).toBe(2);
    expect(refused.stderr).toContain(`--events ${eventsFile}: the file exists; give --force to overwrite it`);
    expect(readFileSync(eventsFile, 'utf8')).toBe('earlier events\n');
    const forced = await runCli([...args, '--force']);
    expect(forced.code, forced.stderr).toBe(0);
    // Both stall alerts are still on at the end of the file: written when the monitor stops, ended by the end of data.
    expect(jsonLines(readFileSync(eventsFile, 'utf8')).map((e) => [e['level'], e['ended_by']])).toEqual([
      ['caution', 'end_of_data'],
      ['warning', 'end_of_data'],
    ]);
  }, 60_000);
});
