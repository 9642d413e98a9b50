/**
 * The packed reader takes runs of lines of one shape straight from their bytes (line-shape.ts). Whatever the lines
 * hold and wherever a read cuts them, it must pack exactly the frames and rejections of judging each line on its own
 * through JSON.parse and the schema (readFrameFile), numbers bit for bit.
 */
import fc from 'fast-check';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { Frame } from '../../src/core/frame.js';
import { FRAME_SLOTS, packedNewSegment, unpackFrame, unpackRejects } from '../../src/decode/frame-batch.js';
import { acceptAsciiFrameBytes } from '../../src/decode/frame-line.js';
import { createLineShape, type PackedRun } from '../../src/decode/line-shape.js';
import { DEFAULT_MAX_LINE_BYTES } from '../../src/decode/line-splitter.js';
import { readFramePackedBatches, readFrameFile, type ReadFrameOptions } from '../../src/decode/read-frames.js';
import type { Rejected } from '../../src/decode/rejections.js';
import { createTimeGate } from '../../src/decode/time-gate.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-shape-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

let fileCount = 0;
function writeTemp(text: string | Buffer): string {
  const path = join(dir, `f${fileCount++}.ndjson`);
  writeFileSync(path, text);
  return path;
}

type Packed = { frames: Array<[Frame, boolean]>; rejects: Array<[number, Rejected]>; lineNos: number[] };

/** The reference: each line judged alone (JSON.parse and the schema, with its raw object), then the time check. */
async function judgedOneByOne(path: string): Promise<Packed> {
  const out: Packed = { frames: [], rejects: [], lineNos: [] };
  for await (const l of readFrameFile(path)) {
    if (l.verdict.ok) {
      out.frames.push([l.verdict.frame, l.newSegment === true]);
      out.lineNos.push(l.lineNo);
    } else {
      const { detail: _detail, ...carried } = l.verdict;
      out.rejects.push([l.lineNo, carried]);
    }
  }
  return out;
}

async function packed(path: string, options: ReadFrameOptions = {}): Promise<Packed> {
  const out: Packed = { frames: [], rejects: [], lineNos: [] };
  for await (const batch of readFramePackedBatches(path, options)) {
    for (let i = 0; i < batch.count; i++) {
      out.frames.push([unpackFrame(batch.frames, i), packedNewSegment(batch.frames, i)]);
      out.lineNos.push(batch.lineNos[i]!);
    }
    for (const { lineNo, rejected } of unpackRejects(batch.rejects)) out.rejects.push([lineNo, rejected]);
  }
  return out;
}

/** toEqual, and every number of every frame the same double (−0 apart from 0). */
function expectSameFrames(actual: Packed, expected: Packed): void {
  expect(actual).toEqual(expected);
  actual.frames.forEach(([frame], i) => {
    const reference = expected.frames[i]![0] as unknown as Record<string, unknown>;
    for (const [key, value] of Object.entries(frame)) expect(Object.is(value, reference[key]), key).toBe(true);
  });
}

/** Lines of one shape with numbers at the edges of the exact conversion rule (15/16 digits, exponents, 10^22). */
const EDGE_NUMBER_TEXTS = [
  '0',
  '-0',
  '-0.0',
  '0.000',
  '1',
  '17.01',
  '123456789012345',
  '1234567890123456',
  '123456789.012345',
  '123456789.0123456',
  '0.1234567890123456',
  '0.000000000000000000000001',
  '0.0000000000000000000001',
  '0.00000000000000000000001',
  '1e22',
  '1e23',
  '1E2',
  '1e+2',
  '1.5e-3',
  '100e-2',
  '1e-400',
  '1e400',
  '1e0009',
  '9007199254740993',
  '999999999.9999999',
  '1000000000',
  '1000000000.0000001',
  '-1000000000',
  '5e-324',
  '2.2250738585072014e-308',
  '0.1',
  '0.2',
  '0.30000000000000004',
  '299.99999999999997',
  '300.00000000000006',
  '01',
  '1.',
  '.5',
  '-',
  '+1',
  '1e',
  '0x10',
];

describe('reading lines of one shape straight into packed batches', () => {
  it('packs numbers at the edges of the exact rule as JSON.parse reads them, in every key', async () => {
    const line = (fields: Record<string, string>): string =>
      `{${Object.entries(fields)
        .map(([k, v]) => `"${k}":${v}`)
        .join(',')}}`;
    const lines: string[] = [];
    let t = 0;
    for (const text of EDGE_NUMBER_TEXTS) {
      for (const key of ['tas_mps', 'alt_m', 'bank_deg', 'nz', 'throttle']) {
        const base = { t_s: `${++t}`, tas_mps: '20', alt_m: '100', bank_deg: '10', nz: '1', throttle: '0.5' };
        lines.push(line({ ...base, [key]: text }));
      }
    }
    const path = writeTemp(lines.join('\n') + '\n');
    const expected = await judgedOneByOne(path);
    expect(expected.frames.length).toBeGreaterThan(80);
    expect(expected.rejects.length).toBeGreaterThan(50);
    expectSameFrames(await packed(path), expected);
    // t_s: each edge after a frame at the lowest time allowed (so that the time check passes whenever the value does).
    for (const text of EDGE_NUMBER_TEXTS) {
      const rest = { tas_mps: '20', alt_m: '100', bank_deg: '10', nz: '1' };
      const frames = [
        line({ t_s: '-1000000000', ...rest }),
        line({ t_s: text, ...rest }),
        line({ t_s: text, ...rest }),
      ];
      const timePath = writeTemp(frames.join('\n') + '\n');
      expectSameFrames(await packed(timePath), await judgedOneByOne(timePath));
    }
  });

  it('packs the numbers JSON.parse reads from any double written in any notation (property)', async () => {
    const notation = fc.constantFrom(
      (x: number) => String(x),
      (x: number) => x.toFixed(3),
      (x: number) => x.toFixed(15),
      (x: number) => x.toExponential(),
      (x: number) => x.toExponential(3).toUpperCase(),
      (x: number) => x.toPrecision(16),
      (x: number) => x.toPrecision(17),
    );
    const value = (min: number, max: number) =>
      fc.tuple(fc.double({ min, max, noNaN: true }), notation).map(([x, write]) => write(x));
    const frame = fc.record({
      t_s: value(0, 1e9),
      tas_mps: value(-1, 301),
      alt_m: value(-600, 21_000),
      bank_deg: value(-190, 190),
      nz: value(-25, 25),
      throttle: value(-0.1, 1.1),
    });
    await fc.assert(
      fc.asyncProperty(fc.array(frame, { minLength: 1, maxLength: 60 }), async (frames) => {
        const text = frames.map(
          (f) =>
            `{${Object.entries(f)
              .map(([k, v]) => `"${k}":${v}`)
              .join(',')}}`,
        );
        const path = writeTemp(text.join('\n') + '\n');
        expectSameFrames(await packed(path), await judgedOneByOne(path));
      }),
      { numRuns: 60 },
    );
  });

  it('packs the same frames and rejections for lines that leave the shape in every way a line can', async () => {
    const frame = (t: number, rest = '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1'): string => `{"t_s":${t},${rest}}`;
    const variants = (t: number): string[] => [
      frame(t),
      // Another key order, then back.
      `{"tas_mps":20,"t_s":${t + 0.1},"alt_m":100,"bank_deg":10,"nz":1}`,
      frame(t + 0.2),
      // A duplicate key (the later one wins, as in JSON.parse), a key outside the table, twice.
      `{"t_s":${t + 0.3},"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"nz":2}`,
      `{"t_s":${t + 0.35},"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"t_s":${t - 5}}`,
      frame(t + 0.4, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"x":1,"x":"a"'),
      // Lines like an accepted one with a key twice, the later value null (then no attitude key is left).
      frame(t + 0.42, '"tas_mps":20,"alt_m":100,"nz":1,"nz":2'),
      frame(t + 0.44, '"tas_mps":20,"alt_m":100,"nz":1,"nz":null'),
      frame(t + 0.46, '"tas_mps":20,"alt_m":100,"nz":1,"nz":-1'),
      // Whitespace inside, around and at the end; CRLF; a CR alone inside.
      `{ "t_s" : ${t + 0.5} , "tas_mps" : 20 , "alt_m" : 100 , "bank_deg" : 10 , "nz" : 1 }`,
      `{"t_s":${t + 0.6},"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1} `,
      `  ${frame(t + 0.7)}`,
      `${frame(t + 0.8)}\r`,
      `${frame(t + 0.85)}\r\r`,
      `{"t_s":${t + 0.9},\r"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1}`,
      // Nulls: an attitude key (another one left, or none), an optional key, a required key, an airspeed.
      frame(t + 1, '"tas_mps":20,"alt_m":100,"bank_deg":null,"nz":1'),
      frame(t + 1.1, '"tas_mps":20,"alt_m":100,"bank_deg":null,"nz":null'),
      frame(t + 1.2, '"tas_mps":20,"alt_m":null,"bank_deg":10,"nz":1'),
      frame(t + 1.3, '"tas_mps":null,"alt_m":100,"bank_deg":10,"nz":1'),
      frame(t + 1.4, '"tas_mps":null,"cas_mps":21,"alt_m":100,"bank_deg":10,"nz":1'),
      frame(t + 1.5, '"tas_mps":20,"cas_mps":null,"alt_m":100,"bank_deg":10,"nz":1'),
      frame(t + 1.6, '"tas_mps":20,"cas_mps":21,"alt_m":100,"bank_deg":10,"nz":1'),
      // Types: strings, booleans, objects and arrays where numbers or flags belong, and the flag itself.
      frame(t + 1.7, '"tas_mps":"20","alt_m":100,"bank_deg":10,"nz":1'),
      frame(t + 1.8, '"tas_mps":20,"alt_m":true,"bank_deg":10,"nz":1'),
      frame(t + 1.9, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"simulated":true'),
      frame(t + 2, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"simulated":false'),
      frame(t + 2.1, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"simulated":null'),
      frame(t + 2.2, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"simulated":1'),
      frame(t + 2.3, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"simulated":"yes"'),
      frame(t + 2.4, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"simulated":tru'),
      frame(t + 2.5, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":[1]'),
      frame(t + 2.6, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":{"v":1}'),
      frame(t + 2.7, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"note":"a\\"b"'),
      frame(t + 2.8, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"note":"plain"'),
      frame(t + 2.9, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"note":nul'),
      frame(t + 3, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"note":-'),
      // Out of range, NaN, a cut line, something after the object, an empty object, an array.
      frame(t + 3.1, '"tas_mps":301,"alt_m":100,"bank_deg":10,"nz":1'),
      frame(t + 3.2, '"tas_mps":NaN,"alt_m":100,"bank_deg":10,"nz":1'),
      frame(t + 3.3, '"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1').slice(0, -3),
      `${frame(t + 3.4)}{}`,
      `${frame(t + 3.5)},`,
      '{}',
      '[1,2]',
      // Time not increasing, then a clock restart (five frames increasing among themselves behind the last).
      frame(t + 3.55),
      frame(t + 3.55),
      ...[1, 2, 3, 4, 5, 6].map((k) => frame(t - 100 + k / 10)),
      frame(t + 3.6),
      // Blank lines of every kind.
      '',
      '\r',
      '   ',
      frame(t + 3.7),
    ];
    const lines = Array.from({ length: 12 }, (_, k) => variants(k * 10)).flat();
    const path = writeTemp(lines.join('\n') + '\n');
    const expected = await judgedOneByOne(path);
    expect(expected.rejects.length).toBeGreaterThan(100);
    expect(expected.frames.filter(([, newSegment]) => newSegment).length).toBeGreaterThan(0);
    expectSameFrames(await packed(path), expected);
  });

  it('gives the same frames and rejections wherever a read boundary cuts a line, at every offset', async () => {
    const lines = Array.from({ length: 200 }, (_, i) =>
      i % 37 === 5
        ? 'oops'
        : i % 41 === 7
          ? `{"t_s":${i / 50},"tas_mps":20,"alt_m":100,"bank_deg":10,"nz":1,"note":"é"}`
          : i % 43 === 9
            ? ''
            : `{"t_s":${(i / 50).toFixed(3)},"tas_mps":${(17 + i / 100).toFixed(2)},"alt_m":120.0,"bank_deg":${(i % 90).toFixed(2)},"nz":1.000}`,
    );
    for (const crlf of [false, true]) {
      const path = writeTemp(lines.join(crlf ? '\r\n' : '\n'));
      const expected = await judgedOneByOne(path);
      // Reads shorter than a line, and reads of 60 to 139 bytes: the first boundary falls at every offset of the
      // first two lines (of about 76 bytes), later ones anywhere (every 4th size with CRLF, for time).
      const sizes = Array.from({ length: 80 }, (_, k) => 60 + k).filter((size) => !crlf || size % 4 === 0);
      for (const chunk of [13, 31, ...sizes]) {
        expectSameFrames(await packed(path, { readChunkBytes: chunk }), expected);
      }
    }
  });

  it('refuses a line of the shape longer than the line cap, as the line-by-line reading does', async () => {
    const line = (t: number, padBytes: number): string =>
      `{"t_s":${t},"tas_mps":20,"alt_m":100,"nz":1,"pad":"${'x'.repeat(padBytes)}"}`;
    const overhead = line(1, 0).length;
    const cap = DEFAULT_MAX_LINE_BYTES + 64;
    const lines = [line(1, 10), line(2, 10), line(3, cap - overhead), line(4, cap - overhead + 1), line(5, 10)];
    const path = writeTemp(lines.join('\n') + '\n');
    const expected = await judgedOneByOne(path);
    expect(expected.rejects.map(([lineNo, r]) => [lineNo, r.code])).toEqual([[4, 'line_too_long']]);
    expectSameFrames(await packed(path), expected);
  });

  it('takes nothing before it has learned a shape, and stops at the first line of another shape', () => {
    const shape = createLineShape();
    const text = Buffer.from(
      '{"t_s":1,"tas_mps":20,"alt_m":100,"nz":1}\n\n{"t_s":2,"tas_mps":20,"alt_m":100,"nz":1}\r\n' +
        '{"t_s":3,"alt_m":100,"tas_mps":20,"nz":1}\n{"t_s":4,"tas_mps":20,"alt_m":100,"nz":1}\n',
    );
    const times: number[] = [];
    const run: PackedRun = {
      frames: new Float64Array(64 * FRAME_SLOTS),
      lineNos: new Int32Array(64),
      count: 0,
      capacity: 64,
      pos: 0,
      physicalNo: 0,
      grow: () => {
        throw new Error('no room needed');
      },
      checkTime: (tS) => {
        times.push(tS);
        return { ok: true, newSegment: false };
      },
      reject: () => {
        throw new Error('no rejection expected');
      },
    };
    const lastLf = text.length - 1;
    shape.take(text, lastLf, 1000, run);
    expect([run.pos, run.count]).toEqual([0, 0]);
    shape.learn(text, 0, text.indexOf('\n'));
    expect(shape.learned()).toBe(true);
    shape.take(text, lastLf, 1000, run);
    // Lines 1 to 3 (the blank line counted); line 4 has its keys in another order.
    expect([run.count, run.physicalNo, Array.from(run.lineNos.subarray(0, run.count)), times]).toEqual([
      2,
      3,
      [1, 3],
      [1, 2],
    ]);
    expect(text.subarray(run.pos, run.pos + 9).toString()).toBe('{"t_s":3,');
  });
});

/**
 * What a shape takes from `text` (plain ASCII lines), driven as the packed reader drives it: at each line the shape
 * does not take, the line is learned when it is an accepted plain frame line and passed over either way. Small runs,
 * so that they grow.
 */
function takeEveryLine(text: Buffer, compile: boolean) {
  const shape = createLineShape({ compile });
  const gate = createTimeGate();
  const rejects: Array<[number, string]> = [];
  const passedOver: number[] = [];
  const run: PackedRun = {
    frames: new Float64Array(2 * FRAME_SLOTS),
    lineNos: new Int32Array(2),
    count: 0,
    capacity: 2,
    pos: 0,
    physicalNo: 0,
    grow() {
      run.capacity *= 2;
      const frames = new Float64Array(run.capacity * FRAME_SLOTS);
      frames.set(run.frames);
      run.frames = frames;
      const lineNos = new Int32Array(run.capacity);
      lineNos.set(run.lineNos);
      run.lineNos = lineNos;
    },
    checkTime: (tS) => gate.check(tS),
    reject: (physicalNo, r) => rejects.push([physicalNo, r.code]),
  };
  const lastLf = text.lastIndexOf(0x0a);
  while (run.pos <= lastLf) {
    shape.take(text, lastLf, 1000, run);
    if (run.pos > lastLf) break;
    const lf = text.indexOf(0x0a, run.pos);
    if (acceptAsciiFrameBytes(text, run.pos, lf)) shape.learn(text, run.pos, text[lf - 1] === 0x0d ? lf - 1 : lf);
    passedOver.push(++run.physicalNo);
    run.pos = lf + 1;
  }
  return {
    frames: Array.from(run.frames.subarray(0, run.count * FRAME_SLOTS)),
    lineNos: Array.from(run.lineNos.subarray(0, run.count)),
    rejects,
    passedOver,
  };
}

describe("a shape's compiled reader", () => {
  // The table-driven reader is held to JSON.parse and the schema above; the compiled one is held to it here.
  const sameAsTables = (lines: string[]): void => {
    const text = Buffer.from(lines.join('\n') + '\n', 'latin1');
    const compiled = takeEveryLine(text, true);
    expect(compiled).toEqual(takeEveryLine(text, false));
    expect(compiled.lineNos.length).toBeGreaterThan(0);
  };

  it('takes the same lines, frames (bit for bit), rejections and stops as the table-driven reader, for values of every kind in every member of many shapes', () => {
    const shapes: Array<Record<string, string>> = [
      { t_s: '0', tas_mps: '20', alt_m: '100', bank_deg: '10', nz: '1' },
      { t_s: '0', cas_mps: '20', alt_m: '100', nz: '1', throttle: '0.5', seq: '7' },
      { seq: '1', t_s: '0', ias_mps: '20', alt_m: '100', bank_deg: '10', mode: '"AUTO"', simulated: 'true' },
      { t_s: '0', tas_mps: '20', alt_m: '100', bank_deg: '10', oat_c: '15', mass_kg: '3.5', on: 'false', x: 'null' },
    ];
    const values = [...EDGE_NUMBER_TEXTS, 'null', 'true', 'false', '"s"', '"a\\"b"', 'nul', '[1]', ''];
    const line = (fields: Record<string, string>): string =>
      `{${Object.entries(fields)
        .map(([k, v]) => `"${k}":${v}`)
        .join(',')}}`;
    for (const shape of shapes) {
      const lines: string[] = [];
      let t = 0;
      for (const key of Object.keys(shape)) {
        for (const value of values) {
          lines.push(line({ ...shape, t_s: `${++t}` }), line({ ...shape, t_s: `${++t}`, [key]: value }));
          if (t % 7 === 0) lines.push('', '\r', `${line({ ...shape, t_s: `${++t}` })}\r`, line({ ...shape, t_s: '1' }));
        }
      }
      // A clock restart: frames increasing among themselves behind the last.
      lines.push(...[1, 2, 3, 4, 5, 6].map((k) => line({ ...shape, t_s: `${k / 10}` })));
      sameAsTables(lines);
    }
  });

  it('takes the same as the table-driven reader for any doubles in any notation (property)', () => {
    const notation = fc.constantFrom(
      (x: number) => String(x),
      (x: number) => x.toFixed(2),
      (x: number) => x.toFixed(17),
      (x: number) => x.toExponential(4),
      (x: number) => x.toPrecision(16),
    );
    const value = (min: number, max: number) =>
      fc.tuple(fc.double({ min, max, noNaN: true }), notation).map(([x, write]) => write(x));
    const frame = fc.record({
      t_s: value(0, 1e6),
      tas_mps: value(-1, 301),
      alt_m: value(-600, 21_000),
      nz: value(-25, 25),
      seq: value(-1e20, 1e20),
    });
    fc.assert(
      fc.property(fc.array(frame, { minLength: 1, maxLength: 80 }), (frames) => {
        const lines = frames.map(
          (f, i) =>
            `{"t_s":${i + 1},${Object.entries(f)
              .filter(([k]) => k !== 't_s')
              .map(([k, v]) => `"${k}":${v}`)
              .join(',')},"t":${f.t_s}}`,
        );
        const text = Buffer.from(lines.join('\n') + '\n', 'latin1');
        expect(takeEveryLine(text, true)).toEqual(takeEveryLine(text, false));
      }),
      { numRuns: 100 },
    );
  });
});
