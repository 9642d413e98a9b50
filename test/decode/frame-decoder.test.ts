import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createFrameDecoder, type DecodedLine } from '../../src/decode/frame-decoder.js';
import { frameLine } from '../helpers/frames.js';

/** A stream with every kind of bad input of the ingest contract between good frames. */
const MIXED_STREAM = Buffer.concat([
  Buffer.from('\uFEFF' + frameLine({ t_s: 0 }) + '\r\n', 'utf8'), // BOM and CRLF
  Buffer.from('not json at all\n'),
  Buffer.from([0x00, 0xff, 0xfe, 0x7b, 0x0a]), // binary noise with NUL
  Buffer.from(frameLine({ t_s: 0.1, tas_mps: 'fast' }) + '\n'),
  Buffer.from('{"t_s":0.2,"tas_mps":NaN,"alt_m":0,"nz":1}\n'),
  Buffer.from(frameLine({ t_s: 0.3, tas_mps: -1 }) + '\n'),
  Buffer.from('\n   \n'), // blank lines: skipped, not counted
  Buffer.from(frameLine({ t_s: 0.4, ias_mps: 19 }) + '\n'), // two airspeed keys
  Buffer.from(frameLine({ t_s: 0.5, bank_deg: 200 }) + '\n'),
  Buffer.from(frameLine({ t_s: 0.6 }) + '\n'),
  Buffer.from(frameLine({ t_s: 0.55 }) + '\n'), // time going backwards
  Buffer.from('{"t_s":0.7,"alt_m":5,"nz":1}\n'), // missing airspeed
  Buffer.from(frameLine({ t_s: 0.8 }) + '\n' + frameLine({ t_s: 0.9 }) + '\r\n'), // several frames in one read
  Buffer.from(frameLine({ t_s: 1.0, alt_m: 30000 }) + '\n'),
  Buffer.from(frameLine({ t_s: 1.05, throttle: 0.5, simulated: true }) + '\n'), // the newer keys
  Buffer.from(frameLine({ t_s: 1.06, throttle: 1.5 }) + '\n'),
  Buffer.from(frameLine({ t_s: 1.07, simulated: 'yes' }) + '\n'),
  Buffer.from('{"t_s":1.1,"tas_mps":20,"al'), // truncated last line
]);

function summarize(lines: DecodedLine[]): string[] {
  return lines.map(
    (l) => `${l.lineNo}:${l.verdict.ok ? `ok ${l.verdict.frame.tS}` : `[${l.verdict.code}] ${l.verdict.reason}`}`,
  );
}

function decodeInChunks(bytes: Buffer, cuts: number[]): DecodedLine[] {
  const decoder = createFrameDecoder();
  const out: DecodedLine[] = [];
  let start = 0;
  for (const cut of [...cuts, bytes.length]) {
    out.push(...decoder.push(bytes.subarray(start, cut)));
    start = cut;
  }
  out.push(...decoder.end());
  return out;
}

describe('frame decoder', () => {
  const whole = summarize(decodeInChunks(MIXED_STREAM, []));

  it('judges every bad input with its reason and keeps the good frames', () => {
    expect(whole).toEqual([
      '1:ok 0',
      '2:[invalid_json] invalid JSON',
      '3:[binary_noise] binary noise (control or invalid bytes)',
      '4:[wrong_type] tas_mps must be a number from 0 to 300 m/s (got "fast")',
      '5:[invalid_json] invalid JSON (NaN or Infinity is not a finite number)',
      '6:[out_of_range] tas_mps must be a number from 0 to 300 m/s (got -1)',
      '7:[conflicting_keys] exactly one airspeed key is allowed (got ias_mps and tas_mps)',
      '8:[out_of_range] bank_deg must be a number from -180 to 180 deg (got 200)',
      '9:ok 0.6',
      '10:[time_not_increasing] time not increasing',
      '11:[missing_key] an airspeed is required (one of ias_mps, cas_mps, tas_mps)',
      '12:ok 0.8',
      '13:ok 0.9',
      '14:[out_of_range] alt_m must be a number from -500 to 20000 m (got 30000)',
      '15:ok 1.05',
      '16:[out_of_range] throttle must be a number from 0 to 1 (got 1.5)',
      '17:[wrong_type] simulated must be true or false (got "yes")',
      '18:[invalid_json] invalid JSON (truncated line?)',
    ]);
  });

  it('gives the same lines when the same bytes are split at every offset', () => {
    for (let cut = 0; cut <= MIXED_STREAM.length; cut++) {
      expect(summarize(decodeInChunks(MIXED_STREAM, [cut])), `split at ${cut}`).toEqual(whole);
    }
  });

  it('gives the same lines when fed one byte at a time, and as strings', () => {
    const cuts = Array.from({ length: MIXED_STREAM.length - 1 }, (_, i) => i + 1);
    expect(summarize(decodeInChunks(MIXED_STREAM, cuts))).toEqual(whole);
    const text = Buffer.from(frameLine({ t_s: 1 }) + '\n' + frameLine({ t_s: 2 }) + '\n');
    const decoder = createFrameDecoder();
    const s = text.toString('utf8');
    const out = [...decoder.push(s.slice(0, 17)), ...decoder.push(s.slice(17)), ...decoder.end()];
    expect(summarize(out)).toEqual(['1:ok 1', '2:ok 2']);
  });

  it('keeps a multibyte character intact when it is split between reads', () => {
    const bytes = Buffer.from('{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"note":"é→°"}\n', 'utf8');
    for (let cut = 0; cut <= bytes.length; cut++) {
      const lines = decodeInChunks(bytes, [cut]);
      expect(lines).toHaveLength(1);
      expect(lines[0]!.verdict.ok && lines[0]!.verdict.raw['note']).toBe('é→°');
    }
  });

  it('cuts a runaway line at the cap, rejects it once and resumes at the next line', () => {
    const decoder = createFrameDecoder({ maxLineBytes: 100 });
    const out: DecodedLine[] = [];
    for (let i = 0; i < 50; i++) out.push(...decoder.push('x'.repeat(40))); // 2 000 bytes, no newline
    out.push(...decoder.push('\n' + frameLine({ t_s: 5 }) + '\n'));
    expect(summarize(out)).toEqual(['1:[line_too_long] line longer than 100 bytes (cut)', '2:ok 5']);
    expect(out[0]!.text).toHaveLength(100);
  });

  it('caps lines at 64 KiB by default', () => {
    const decoder = createFrameDecoder();
    const out = [...decoder.push(Buffer.alloc(70 * 1024, 0x41)), ...decoder.push('\n')];
    expect(summarize(out)).toEqual(['1:[line_too_long] line longer than 65536 bytes (cut)']);
  });

  it('marks the frame that starts a new clock segment', () => {
    const decoder = createFrameDecoder();
    const times = [100, 0, 0.1, 0.2, 0.3, 0.4];
    const out = decoder.push(times.map((t) => frameLine({ t_s: t })).join('\n') + '\n');
    expect(out.map((l) => l.newSegment === true)).toEqual([false, false, false, false, false, true]);
  });

  it('restarts the time check after reset', () => {
    const decoder = createFrameDecoder();
    decoder.push(frameLine({ t_s: 100 }) + '\n');
    decoder.reset();
    expect(summarize(decoder.push(frameLine({ t_s: 1 }) + '\n'))).toEqual(['2:ok 1']);
  });

  it('never throws on random bytes in random splits (property)', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 400 }), fc.array(fc.nat(400), { maxLength: 6 }), (bytes, rawCuts) => {
        const buf = Buffer.from(bytes);
        const cuts = [...new Set(rawCuts.map((c) => c % (buf.length + 1)))].sort((a, b) => a - b);
        const lines = decodeInChunks(buf, cuts);
        for (const l of lines) expect(typeof l.verdict.ok).toBe('boolean');
        // Same judgement whatever the split.
        expect(summarize(lines)).toEqual(summarize(decodeInChunks(buf, [])));
      }),
      { numRuns: 300 },
    );
  });

  it('never throws on random JSON-ish text (property)', () => {
    const jsonish = fc.oneof(fc.json(), fc.string(), fc.constantFrom('{"t_s":', 'NaN', '\u0000', '\r\n', '\n', '}'));
    fc.assert(
      fc.property(fc.array(jsonish, { maxLength: 20 }), (parts) => {
        const decoder = createFrameDecoder({ maxLineBytes: 256 });
        expect(() => {
          for (const p of parts) decoder.push(p);
          decoder.end();
        }).not.toThrow();
      }),
      { numRuns: 300 },
    );
  });
});
