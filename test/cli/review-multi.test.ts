import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { encodeHeader, encodeLine, encodeLinkEvent } from '../../src/recording/format.js';
import { EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';
import { REPO_ROOT, runCli } from '../helpers/run-cli.js';

// Invented test flights (not real data) for the example airframe, 10 frames/s, sea level ISA, 20 m/s TAS. A card
// of one point (P01, 20 m/s at the bank `turnmargin card --speeds 20 --steps 0.5` gives) is held for 15 frames
// (1.4 s from the first to the last) in a.ndjson and for 40 frames (3.9 s) in b.ndjson: the longest hold, and the
// only one reaching hold_s = 3 s, is in the second file. b.ndjson starts at t = 100 s.
const FLIGHT = join(REPO_ROOT, 'test/fixtures/review-flight.ndjson');
const CLEAN = join(REPO_ROOT, 'test/fixtures/review-clean.ndjson');

let dir = '';
let cardPath = '';
let fileA = '';
let fileB = '';
let recording = '';
let targetBankDeg = 0;

/** Level at 20 m/s, `heldFrames` at the point's bank, level again; n = 1/cos(bank) (a level coordinated turn). */
function heldFlight(path: string, heldFrames: number, t0: number): void {
  const lines: string[] = [];
  let i = 0;
  const add = (bankDeg: number, frames: number) => {
    for (let k = 0; k < frames; k++, i++) {
      const nz = 1 / Math.cos((bankDeg * Math.PI) / 180);
      lines.push(
        JSON.stringify({ t_s: Number((t0 + i / 10).toFixed(2)), tas_mps: 20, alt_m: 0, bank_deg: bankDeg, nz }),
      );
    }
  };
  add(0, 50);
  add(targetBankDeg, heldFrames);
  add(0, 50);
  writeFileSync(path, lines.join('\n') + '\n');
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'turnmargin-multi-'));
  cardPath = join(dir, 'card.json');
  const card = await runCli([
    'card',
    '--aircraft',
    EXAMPLE_AIRFRAME_PATH,
    '--speeds',
    '20',
    '--steps',
    '0.5',
    '--format',
    'json',
    '--out',
    cardPath,
  ]);
  expect(card.code).toBe(0);
  const points = JSON.parse(readFileSync(cardPath, 'utf8')).points as Array<{ id: string; bank_deg: number }>;
  expect(points.map((p) => p.id)).toEqual(['P01']);
  targetBankDeg = points[0]!.bank_deg;
  fileA = join(dir, 'a.ndjson');
  fileB = join(dir, 'b.ndjson');
  heldFlight(fileA, 15, 0);
  heldFlight(fileB, 40, 100);

  // A recording: receive times from Unix time 1 700 000 000 000 ms (2023-11-14 22:13:20 UTC; `date -u -d
  // @1700000000`) in steps of 100 ms; 21 frames, so the last accepted frame arrived 2.1 s later.
  recording = join(dir, 'flight.tmrec');
  const parts: Buffer[] = [
    encodeHeader('serial /dev/ttyTEST @ 57600', 1_700_000_000_000),
    encodeLinkEvent(1_700_000_000_000, 'open'),
  ];
  for (let i = 1; i <= 21; i++)
    parts.push(
      encodeLine(
        1_700_000_000_000 + i * 100,
        Buffer.from(JSON.stringify({ t_s: i / 10, tas_mps: 14, alt_m: 0, bank_deg: 10, nz: 1.02 })),
        false,
      ),
    );
  parts.push(encodeLine(1_700_000_002_200, Buffer.from('radio noise'), false));
  writeFileSync(recording, Buffer.concat(parts));
}, 30_000);

const base = (...files: string[]) => ['review', ...files, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0'];

async function json(args: string[], env?: NodeJS.ProcessEnv) {
  const r = await runCli(args, env ? { env } : {});
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.stdout) as Record<string, unknown> & {
    flights: Array<Record<string, unknown>>;
    test_points: Array<Record<string, unknown>>;
  };
}

describe('review of several flights at once (built CLI)', () => {
  it('finds the longest hold of a point in the second file and reports it with that file and its start', async () => {
    const out = await json([...base(fileA, fileB), '--card', cardPath, '--format', 'json']);
    expect(Object.keys(out)).toEqual(['flights', 'test_points']);
    const p = out.test_points[0]!;
    expect(p['id']).toBe('P01');
    expect(p['status']).toBe('achieved');
    expect(p['file']).toBe('b.ndjson');
    // 40 frames 0.1 s apart: 3.9 s from the first to the last; the hold starts at frame 50 of b (t = 105 s).
    expect(p['longest_hold_s'] as number).toBeCloseTo(3.9, 6);
    expect(p['start_t_s']).toBeCloseTo(105, 9);
    // a.ndjson alone: the same point only partly held (15 frames, 1.4 s).
    const onlyA = await json([...base(fileA), '--card', cardPath, '--format', 'json']);
    const a = onlyA.test_points[0]!;
    expect(a['status']).toBe('partial');
    expect(a['longest_hold_s'] as number).toBeCloseTo(1.4, 6);
    expect(a['file']).toBe('a.ndjson');
  });

  it('gives each flight exactly its one-file review in `flights` (model check included), in the order given', async () => {
    const [both, one, two] = await Promise.all([
      json([...base(FLIGHT, CLEAN), '--format', 'json']),
      json([...base(FLIGHT), '--format', 'json']),
      json([...base(CLEAN), '--format', 'json']),
    ]);
    expect(Object.keys(both)).toEqual(['flights']);
    expect(both.flights).toEqual([one, two]);
    expect(both.flights[0]!['source']).toBe(FLIGHT);
    for (const f of both.flights) expect(Object.keys(f['model_check'] as object)).toEqual(['full', 'idle']);
  });

  it('keeps the one-file report in its shape: the review at the top level, test_points beside it', async () => {
    const plain = await json([...base(FLIGHT), '--format', 'json']);
    expect(plain['flights']).toBeUndefined();
    expect(Object.keys(plain)).toEqual([
      'source',
      'airframe',
      'frames',
      'accepted',
      'rejected',
      'rejects',
      'duration_s',
      'events',
      'peaks',
      'time_in_level',
      'airframe_file',
      'first_t_s',
      'last_t_s',
      'conditions',
      'thresholds',
      'smooth_tau_s',
      'assumed_share',
      'rate_window_s',
      'throttle_assumed',
      'model_check',
    ]);
    const carded = await json([...base(fileB), '--card', cardPath, '--format', 'json']);
    expect(Object.keys(carded)).toEqual([...Object.keys(plain), 'test_points']);
    // A one-file recording's review has no receive-time key either (it is part of the several-file summary).
    const rec = await json([...base(recording), '--format', 'json']);
    expect(rec['received_utc']).toBeUndefined();
  });

  it('gives a recording its UTC start and end from the receive times of its first and last accepted frame', async () => {
    const out = await json([...base(recording, fileA), '--format', 'json']);
    expect(out.flights[0]!['received_utc']).toEqual({
      start: '2023-11-14T22:13:20.100Z',
      end: '2023-11-14T22:13:22.100Z',
    });
    expect(out.flights[0]!['rejected']).toBe(1);
    expect(out.flights[1]!['received_utc']).toBeUndefined(); // NDJSON: no receive times
  });

  it('writes the same content as Markdown and CSV: a row per flight, the points over all flights, every event', async () => {
    const args = [...base(recording, FLIGHT, fileB), '--card', cardPath];
    const [md, csv, j] = await Promise.all([
      runCli([...args, '--format', 'md']),
      runCli([...args, '--format', 'csv']),
      json([...args, '--format', 'json']),
    ]);
    expect(md.code).toBe(0);
    expect(md.stdout).toMatch(/^# Flight review: 3 flights/);
    expect(md.stdout).toMatch(
      /\| 1 \| flight\.tmrec \| 22 \(21 \/ 1\) \| 0\.10 to 2\.10 \| 2\.00 \| 2023-11-14T22:13:20\.100Z \| 2023-11-14T22:13:22\.100Z \|/,
    );
    expect(md.stdout).toMatch(/\| 2 \| review-flight\.ndjson \| WARNING \| /);
    expect(md.stdout).toContain('## Test points over all flights (card.json)');
    expect(md.stdout).toMatch(/\| P01 \| 20\.0 \| [\d.]+ \| achieved \| 3\.9 of 3 \| b\.ndjson \| 105\.0 \|/);
    for (const h of ['## Flight 1: ', '## Flight 2: ', '## Flight 3: ']) expect(md.stdout).toContain(h);
    expect(md.stdout.match(/Advisory only/g)).toHaveLength(1);

    expect(csv.code).toBe(0);
    const tables = csv.stdout.trimEnd().split('\n\n');
    expect(tables).toHaveLength(3); // flights, events, test points
    const [flights, events, points] = tables.map((t) => t.split('\n'));
    expect(flights![0]).toMatch(/^file,frames,accepted,rejected,first_t_s,last_t_s,duration_s,utc_start,utc_end,/);
    expect(flights!.slice(1).map((l) => l.split(',')[0])).toEqual(['flight.tmrec', 'review-flight.ndjson', 'b.ndjson']);
    expect(flights![1]).toContain(',2023-11-14T22:13:20.100Z,2023-11-14T22:13:22.100Z,');
    expect(events![0]).toMatch(/^file,limit,level,start_s,end_s,/);
    // Every event of every flight; a flight without events has one row with the event columns empty (its
    // flight-level columns: assumed shares, model check).
    const expected = j.flights.flatMap((f, i) => {
      const file = ['flight.tmrec', 'review-flight.ndjson', 'b.ndjson'][i];
      const flightEvents = f['events'] as Array<Record<string, unknown>>;
      if (flightEvents.length === 0) return [`${file},,,,`];
      return flightEvents.map((e) => [file, e['limit'], e['level'], e['start_s'], e['end_s']].join(','));
    });
    expect(expected.length).toBeGreaterThan(0);
    expect(events!.slice(1).map((l) => l.split(',').slice(0, 5).join(','))).toEqual(expected);
    expect(points![1]).toMatch(/^P01,20,[\d.]+,[\d.]+,3,achieved,3\.9,b\.ndjson,105,/);
  });

  it('gives the same report through the worker threads as in the main thread, for more files than cores', async () => {
    const args = [...base(fileA, FLIGHT, recording, fileB, CLEAN), '--card', cardPath, '--format', 'json'];
    const [inThread, inWorkers] = await Promise.all([
      json(args),
      json(args, { TURNMARGIN_REVIEW_WORKER_MIN_BYTES: '0' }),
    ]);
    expect(inWorkers).toEqual(inThread);
    expect(inWorkers.flights).toHaveLength(5);
    expect(inWorkers.test_points[0]!['file']).toBe('b.ndjson');
    expect(inWorkers.flights[2]!['received_utc']).toEqual({
      start: '2023-11-14T22:13:20.100Z',
      end: '2023-11-14T22:13:22.100Z',
    });

    // One file with a card: the worker computes beside the reading thread and follows the card there too.
    const one = [...base(fileB), '--card', cardPath, '--format', 'json'];
    expect(await json(one, { TURNMARGIN_REVIEW_WORKER_MIN_BYTES: '0' })).toEqual(await json(one));
  });

  it('names a second file that cannot be read or holds no frame, exits 2 and prints nothing of the others', async () => {
    const missing = join(dir, 'no-such.ndjson');
    const r = await runCli([...base(fileA, missing, FLIGHT), '--format', 'json']);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toContain(`${missing}: cannot read the telemetry file (no such file)`);

    const allBad = join(REPO_ROOT, 'test/fixtures/review-all-bad.ndjson');
    const out = join(dir, 'never.md');
    for (const env of [{}, { TURNMARGIN_REVIEW_WORKER_MIN_BYTES: '0' }]) {
      const bad = await runCli([...base(fileA, allBad, fileB), '--out', out], { env });
      expect(bad.code).toBe(2);
      expect(bad.stdout).toBe('');
      expect(bad.stderr).toMatch(/review-all-bad\.ndjson: no accepted frame \(3 lines read, 3 rejected\)/);
      expect(existsSync(out)).toBe(false);
    }
  });

  it('refuses --per-frame and --plot with several files (they describe one flight), exit 2', async () => {
    for (const [option, file] of [
      ['--per-frame', 'r.ndjson'],
      ['--plot', 'p.svg'],
    ] as const) {
      const r = await runCli([...base(fileA, fileB), option, join(dir, file)]);
      expect(r.code).toBe(2);
      expect(r.stderr).toContain(`${option} describes one flight: give one telemetry FILE with it (got 2)`);
      expect(existsSync(join(dir, file))).toBe(false);
    }
  });
});

describe('check of several flights at once (built CLI)', () => {
  it('fails when any flight fails, and passes when none does', async () => {
    const failing = await runCli(['check', CLEAN, FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0']);
    expect(failing.code).toBe(1);
    expect(failing.stdout).toContain(`check ${CLEAN}`);
    expect(failing.stdout).toContain(`check ${FLIGHT}`);
    expect(failing.stdout).toMatch(/FAIL: 1 of 2 flights had an event that reached warning \(review-flight\.ndjson\)/);
    const passing = await runCli(['check', CLEAN, fileA, '--aircraft', EXAMPLE_AIRFRAME_PATH]);
    expect(passing.code).toBe(0);
    expect(passing.stdout).toContain('ALL PASS: no event reached warning in 2 flights');
  });

  it('requires the card points over all flights: a point achieved only in the second file passes', async () => {
    const args = (...files: string[]) => [
      'check',
      ...files,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--card',
      cardPath,
      '--require-points',
    ];
    const onlyA = await runCli(args(fileA));
    expect(onlyA.code).toBe(1);
    expect(onlyA.stdout).toContain('test points: 0 of 1 achieved');
    const both = await runCli(args(fileA, fileB));
    expect(both.code).toBe(0);
    expect(both.stdout).toContain('test points: 1 of 1 achieved');
  });
});

describe('review A B --card --format html (built CLI)', () => {
  it("shows the card's points over all flights and the recording's UTC start and end in the summary", async () => {
    const out = join(dir, 'points.html');
    const r = await runCli([...base(recording, fileA, fileB), '--card', cardPath, '--format', 'html', '--out', out]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const html = readFileSync(out, 'utf8');
    const summary = /<table class="summary">([\s\S]*?)<\/table>/.exec(html)![1]!;
    expect(summary).toContain('2023-11-14T22:13:20.100Z<br>2023-11-14T22:13:22.100Z');
    const points = /<table class="points">([\s\S]*?)<\/table>/.exec(html)![1]!;
    expect(points).toMatch(/<td>P01<\/td><td>✔ achieved<\/td>/);
    expect(points).toContain('<td>b.ndjson</td>');
  });

  it('shows the test points in the HTML report of one file too', async () => {
    const out = join(dir, 'one.html');
    const r = await runCli([...base(fileB), '--card', cardPath, '--format', 'html', '--out', out]);
    expect(r.code).toBe(0);
    expect(readFileSync(out, 'utf8')).toContain('<h2>Test points</h2>');
  });
});
