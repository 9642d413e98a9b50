/**
 * Every rejection code, reached through the decoder that gives it, with its words made in one place from the data.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { createFrameDecoder } from '../../src/decode/frame-decoder.js';
import { parseFrameLine } from '../../src/decode/frame-line.js';
import { readFrameFile } from '../../src/decode/read-frames.js';
import {
  REJECT_CODES,
  rejected,
  rejectionGroupWords,
  rejectionWords,
  type RejectCode,
  type Rejected,
} from '../../src/decode/rejections.js';
import { createServeSession } from '../../src/serve/session.js';
import { exampleAirframe } from '../helpers/airframes.js';

function rejectionOfLine(line: string): Rejected {
  const v = parseFrameLine(line);
  if (v.ok) throw new Error(`expected a rejection for ${line}`);
  return v;
}

async function rejectionsOfFile(name: string, text: string): Promise<Rejected[]> {
  const path = join(mkdtempSync(join(tmpdir(), 'rejections-')), name);
  writeFileSync(path, text);
  const out: Rejected[] = [];
  for await (const line of readFrameFile(path)) if (!line.verdict.ok) out.push(line.verdict);
  return out;
}

const FRAME = '{"t_s":1,"tas_mps":20,"alt_m":100,"nz":1}';

describe('rejection codes', () => {
  it('are each given by a decoder, with their words', async () => {
    const reached = new Map<RejectCode, Rejected>();
    const add = (r: Rejected): void => void reached.set(r.code, r);

    add(rejectionOfLine('  \t '));
    add(rejectionOfLine('\u0000\u0001{"t_s":1}'));
    add(rejectionOfLine('{"t_s":1,"tas_mps":2'));
    add(rejectionOfLine('[1,2]'));
    add(rejectionOfLine('{"tas_mps":20,"alt_m":100,"nz":1}'));
    add(rejectionOfLine('{"t_s":1,"tas_mps":"fast","alt_m":100,"nz":1}'));
    add(rejectionOfLine('{"t_s":1,"tas_mps":20,"alt_m":100,"nz":1,"throttle":2}'));
    add(rejectionOfLine('{"t_s":1,"tas_mps":20,"cas_mps":20,"alt_m":100,"nz":1}'));
    const decoder = createFrameDecoder({ maxLineBytes: 64 });
    for (const d of decoder.push(`${FRAME}\n${FRAME}\n{"t_s":2${' '.repeat(80)}}\n`)) if (!d.verdict.ok) add(d.verdict);
    for (const r of await rejectionsOfFile('log.csv', 't_s,tas_mps,alt_m,nz\n1,20,100,1\n2,20,100\n')) add(r);
    for (const r of await rejectionsOfFile('rec.tmrec', '#turnmargin-recording 1\n#source test\nnot a record\n'))
      add(r);
    const session = createServeSession(exampleAirframe(), { margins: {} });
    const [empty] = session.handleMessage('');
    add(rejected({ code: (empty as { code: RejectCode }).code }));

    expect([...reached.keys()].sort()).toEqual([...REJECT_CODES].sort());
    expect(Object.fromEntries([...reached].map(([code, r]) => [code, r.reason]))).toEqual({
      empty_line: 'empty line',
      binary_noise: 'binary noise (control or invalid bytes)',
      invalid_json: 'invalid JSON (truncated line?)',
      not_an_object: 'not a JSON object (got an array)',
      missing_key: 't_s is required',
      wrong_type: 'tas_mps must be a number from 0 to 300 m/s (got "fast")',
      out_of_range: 'throttle must be a number from 0 to 1 (got 2)',
      conflicting_keys: 'exactly one airspeed key is allowed (got cas_mps and tas_mps)',
      time_not_increasing: 'time not increasing',
      line_too_long: 'line longer than 64 bytes (cut)',
      column_count: 'expected 4 columns (got 3)',
      bad_record: 'not a recording record (expected receive time, TAB, line)',
      empty_message: 'empty message (no frame in it)',
    });
    // The words are a function of the data: made again from the code, key, value and detail, they are the same.
    for (const r of reached.values()) expect(rejectionWords(r)).toBe(r.reason);
  });

  it('phrase a rule checked outside the table with its own detail words (the subsonic bound)', () => {
    const mach = rejected({ code: 'out_of_range', detail: 'above the subsonic range (Mach 1.02)' });
    expect(mach).toEqual({
      ok: false,
      reason: 'above the subsonic range (Mach 1.02)',
      code: 'out_of_range',
      detail: 'above the subsonic range (Mach 1.02)',
    });
    expect(
      rejectionWords({
        code: 'out_of_range',
        key: 'cas_mps',
        got: '290',
        detail: 'above the subsonic range (Mach 1.02)',
      }),
    ).toBe('cas_mps above the subsonic range (Mach 1.02) (got 290)');
  });

  it('group without the offending value, so that link health counts one kind once', () => {
    const a = rejectionOfLine('{"t_s":1,"tas_mps":20,"alt_m":25000,"nz":1}');
    const b = rejectionOfLine('{"t_s":1,"tas_mps":20,"alt_m":-900,"nz":1}');
    expect(a.reason).not.toBe(b.reason);
    expect(rejectionGroupWords(a)).toBe('alt_m must be a number from -500 to 20000 m');
    expect(rejectionGroupWords(b)).toBe(rejectionGroupWords(a));
  });
});
