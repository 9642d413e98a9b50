/**
 * Fuzz: 100 000 random and mutated lines through the stream decoder (in random read splits) and through the built
 * `review` and `replay --no-ui` commands. Nothing crashes, every line is judged once, every bad line is counted with
 * a reason, and the file readers agree line for line with the stream decoder.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMarginTracker } from '../../src/core/margins.js';
import { createFrameDecoder, type DecodedLine } from '../../src/decode/frame-decoder.js';
import { REJECT_CODES, rejectionWords } from '../../src/decode/rejections.js';
import { parseFrameLine } from '../../src/decode/frame-line.js';
import { FRAME_KEYS } from '../../src/decode/frame-keys.js';
import { EXAMPLE_AIRFRAME_PATH, exampleAirframe } from '../helpers/airframes.js';
import { fuzzLines, KNOWN_REASON, seededRandom, type FuzzLine } from '../helpers/fuzz-lines.js';
import { CLI_PATH, REPO_ROOT } from '../helpers/run-cli.js';

const LINE_COUNT = 100_000;
const SEED = 20261201;
const dir = mkdtempSync(join(tmpdir(), 'tm-fuzz-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

let lines: FuzzLine[];
let decoded: DecodedLine[];
let filePath: string;

/** The stream decoder fed the whole set in random read sizes (1 byte to 8 KiB), as a serial port would. */
function decodeInRandomSplits(all: FuzzLine[], seed: number): DecodedLine[] {
  const rand = seededRandom(seed);
  const stream = Buffer.concat(all.flatMap((l) => [l.bytes, Buffer.from('\n')]));
  const decoder = createFrameDecoder();
  const out: DecodedLine[] = [];
  let at = 0;
  while (at < stream.length) {
    const size = rand() < 0.1 ? 1 + Math.floor(rand() * 8) : 1 + Math.floor(rand() * 8192);
    out.push(...decoder.push(stream.subarray(at, at + size)));
    at += size;
  }
  out.push(...decoder.end());
  return out;
}

/** Run the built CLI, keeping only what the test needs of a long stderr. */
function runCliCounting(args: string[]): Promise<{ code: number | null; stdout: string; rejectedLines: string[] }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [CLI_PATH, ...args], {
      cwd: REPO_ROOT,
      stdio: ['ignore', 'pipe', 'pipe'],
      env: { ...process.env, NO_COLOR: '1' },
    });
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const timer = setTimeout(() => child.kill('SIGKILL'), 40_000);
    child.on('error', reject);
    child.on('close', (code) => {
      clearTimeout(timer);
      resolve({ code, stdout, rejectedLines: stderr.split('\n').filter((l) => l.startsWith('turnmargin: rejected ')) });
    });
  });
}

beforeAll(() => {
  lines = fuzzLines(LINE_COUNT, SEED);
  decoded = decodeInRandomSplits(lines, SEED + 1);
  filePath = join(dir, 'fuzz.ndjson');
  writeFileSync(filePath, Buffer.concat(lines.flatMap((l) => [l.bytes, Buffer.from('\n')])));
});

describe('fuzz: 100 000 random and mutated lines', () => {
  it('mixes valid frames, every kind of mutation and random bytes', () => {
    const kinds = new Map<string, number>();
    for (const l of lines) kinds.set(l.kind, (kinds.get(l.kind) ?? 0) + 1);
    expect(kinds.get('valid')).toBeGreaterThan(30_000);
    expect(kinds.get('random')).toBeGreaterThan(10_000);
    for (const m of [
      'byte-flip',
      'truncate',
      'drop-char',
      'key-swap',
      'value-swap',
      'huge-number',
      'not-finite',
      'out-of-range',
      'nul',
      'invalid-utf8',
      'very-long',
      'wrong-type',
      'not-an-object',
      'crlf-bom',
    ]) {
      expect(kinds.get(`mutated:${m}`), m).toBeGreaterThan(2000);
    }
    expect(lines.filter((l) => l.bytes.length > 64 * 1024).length).toBeGreaterThan(250);
  });

  it('the stream decoder judges every line exactly once, in order, whatever the read splits', () => {
    expect(decoded).toHaveLength(LINE_COUNT);
    expect(decoded.map((d) => d.lineNo)).toEqual(Array.from({ length: LINE_COUNT }, (_, i) => i + 1));
    const accepted = decoded.filter((d) => d.verdict.ok).length;
    const rejected = decoded.filter((d) => !d.verdict.ok).length;
    expect(accepted + rejected).toBe(LINE_COUNT);
    expect(accepted).toBeGreaterThan(20_000);
    expect(rejected).toBeGreaterThan(40_000);
  });

  it('gives every bad line a known reason, the same as judging the line alone (or time order / the length cap)', () => {
    const reasons = new Map<string, number>();
    const codes = new Set<string>();
    const wrong: string[] = [];
    for (let i = 0; i < LINE_COUNT; i++) {
      const d = decoded[i]!;
      const line = lines[i]!;
      const where = `line ${i + 1} (${line.kind})`;
      const alone = line.bytes.length > 64 * 1024 ? null : parseFrameLine(d.text);
      if (d.verdict.ok) {
        if (!alone?.ok) wrong.push(`${where}: accepted in the stream but not alone`);
        continue;
      }
      const reason = d.verdict.reason;
      const expected =
        alone === null ? 'line longer than 65536 bytes (cut)' : alone.ok ? 'time not increasing' : alone.reason;
      const expectedCode = alone === null ? 'line_too_long' : alone.ok ? 'time_not_increasing' : alone.code;
      if (!KNOWN_REASON.test(reason)) wrong.push(`${where}: unknown reason ${JSON.stringify(reason)}`);
      if (reason !== expected) wrong.push(`${where}: ${JSON.stringify(reason)} instead of ${JSON.stringify(expected)}`);
      if (!REJECT_CODES.includes(d.verdict.code)) wrong.push(`${where}: unknown code ${d.verdict.code}`);
      if (d.verdict.code !== expectedCode) wrong.push(`${where}: code ${d.verdict.code} instead of ${expectedCode}`);
      // The words are made from the data: the same code, key and value give the same words.
      if (rejectionWords(d.verdict) !== reason) wrong.push(`${where}: words not made from the code`);
      codes.add(d.verdict.code);
      const kind = reason.replace(/ \(got .*\)$/s, '').replace(/^[\w]+ must be .*/s, 'a key out of its rule');
      reasons.set(kind, (reasons.get(kind) ?? 0) + 1);
    }
    expect(wrong.slice(0, 10)).toEqual([]);
    // Many different faults were actually reached, not one reason for everything.
    for (const r of [
      'invalid JSON',
      'binary noise (control or invalid bytes)',
      'invalid JSON (NaN or Infinity is not a finite number)',
      'a key out of its rule',
      'time not increasing',
      'line longer than 65536 bytes (cut)',
      'bank_deg or nz is required',
    ]) {
      expect(reasons.get(r), r).toBeGreaterThan(50);
    }
    expect([...reasons.keys()].some((r) => r.startsWith('exactly one airspeed key'))).toBe(true);
    expect([...reasons.keys()].some((r) => r.startsWith('not a JSON object'))).toBe(true);
    // Every code a stream of frame lines can give was reached (the CSV, recording and serve codes come elsewhere).
    expect([...codes].sort()).toEqual(
      REJECT_CODES.filter((c) => !['empty_line', 'column_count', 'bad_record', 'empty_message'].includes(c)).sort(),
    );
  });

  it('accepts only finite, plausible frames, and the margin computation takes every one of them without throwing', () => {
    const tracker = createMarginTracker(exampleAirframe());
    const wrong: string[] = [];
    let lastTS = -Infinity;
    let computed = 0;
    for (const d of decoded) {
      if (!d.verdict.ok) continue;
      const f = d.verdict.frame;
      const where = `line ${d.lineNo}`;
      if (![f.tS, f.airspeedMps, f.altM, f.bankDeg ?? 0, f.nz ?? 0, f.oatC ?? 0, f.massKg ?? 1].every(Number.isFinite))
        wrong.push(`${where}: not finite`);
      if (f.airspeedMps < 0) wrong.push(`${where}: negative airspeed`);
      for (const rule of FRAME_KEYS) {
        if (rule.type !== 'number') continue;
        const value =
          rule.presence === 'airspeed'
            ? f.airspeedKind === rule.field
              ? f.airspeedMps
              : undefined
            : (f as unknown as Record<string, number | undefined>)[rule.field];
        if (value !== undefined && !(value >= rule.min && value <= rule.max))
          wrong.push(`${where}: ${rule.key} out of bounds`);
      }
      if (d.newSegment) tracker.reset();
      else if (!(f.tS > lastTS)) wrong.push(`${where}: time not increasing yet accepted`);
      lastTS = f.tS;
      if (tracker.push(f).t_s !== f.tS) wrong.push(`${where}: record time differs`);
      computed += 1;
    }
    expect(wrong.slice(0, 10)).toEqual([]);
    expect(computed).toBeGreaterThan(20_000);
  });

  it('review reads the same file without crashing: lines read = accepted + rejected, the same counts and reasons as the decoder', async () => {
    const r = await runCliCounting(['review', filePath, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'json']);
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout) as {
      frames: number;
      accepted: number;
      rejected: number;
      rejects: Array<{ line: number; reason: string }>;
    };
    const bad = decoded.filter((d) => !d.verdict.ok);
    expect(report.frames).toBe(LINE_COUNT);
    expect(report.accepted + report.rejected).toBe(report.frames);
    expect(report.rejected).toBe(bad.length);
    // The report lists the first rejected lines with their reason: the same lines, the same reasons.
    expect(report.rejects.length).toBeGreaterThan(0);
    expect(report.rejects).toEqual(
      bad.slice(0, report.rejects.length).map((d) =>
        d.verdict.ok
          ? {}
          : {
              line: d.lineNo,
              reason: d.verdict.reason,
              code: d.verdict.code,
              key: d.verdict.key,
              got: d.verdict.got,
            },
      ),
    );
  });

  it('replay --no-ui names every rejected line with its number and reason, and prints a record per accepted line', async () => {
    const r = await runCliCounting([
      'replay',
      filePath,
      '--aircraft',
      EXAMPLE_AIRFRAME_PATH,
      '--speed',
      '0',
      '--no-ui',
    ]);
    expect(r.code).toBe(0);
    const bad = decoded.filter((d) => !d.verdict.ok);
    expect(r.rejectedLines).toHaveLength(bad.length);
    for (let i = 0; i < bad.length; i += 97) {
      const d = bad[i]!;
      expect(r.rejectedLines[i]).toContain(
        d.verdict.ok ? '' : `rejected line ${d.lineNo} [${d.verdict.code}]: ${d.verdict.reason}`,
      );
    }
    expect(r.stdout.split('\n').filter(Boolean)).toHaveLength(LINE_COUNT - bad.length);
  });
});
