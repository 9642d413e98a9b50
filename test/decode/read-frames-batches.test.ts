/**
 * The file reader decodes whole chunks at once where it can; it must give exactly the lines of judging each
 * physical line on its own, whatever falls on a chunk boundary (long lines, multi-byte text, invalid bytes, CRLF).
 */
import fc from 'fast-check';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createFrameDecoder } from '../../src/decode/frame-decoder.js';
import { DEFAULT_MAX_LINE_BYTES } from '../../src/decode/line-splitter.js';
import {
  createPackedBatchPool,
  FRAME_SLOTS,
  packedNewSegment,
  packFrame,
  unpackFrame,
  unpackRejects,
} from '../../src/decode/frame-batch.js';
import type { Rejected } from '../../src/decode/rejections.js';
import { readFrameBatches, readFramePackedBatches, readFrameFile } from '../../src/decode/read-frames.js';
import type { Frame } from '../../src/core/frame.js';
import { encodeHeader, encodeLine, encodeLinkEvent } from '../../src/recording/format.js';
import { frameLine } from '../helpers/frames.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-batches-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** The reader's line cap (a recording line may carry a prefix beyond the 64 KiB of the line). */
const FILE_CAP = DEFAULT_MAX_LINE_BYTES + 64;

interface Judged {
  lineNo: number;
  text: string;
  verdict: unknown;
  newSegment?: boolean;
}

/** Reference: split the bytes at each LF and judge every physical line alone (cut past the cap). */
function judgeEachLine(bytes: Buffer): Judged[] {
  const decoder = createFrameDecoder();
  const out: Judged[] = [];
  let start = 0;
  let physicalNo = 0;
  while (start < bytes.length) {
    let lf = bytes.indexOf(0x0a, start);
    if (lf < 0) lf = bytes.length;
    physicalNo += 1;
    const line = bytes.subarray(start, lf);
    start = lf + 1;
    if (line.length === 0 || (line.length === 1 && line[0] === 0x0d)) continue;
    const cut = line.length > FILE_CAP;
    const judged = decoder.judgeLine({ bytes: cut ? line.subarray(0, FILE_CAP) : line, cut });
    if (!judged) continue;
    const entry: Judged = { lineNo: physicalNo, text: judged.text, verdict: judged.verdict };
    if (judged.newSegment) entry.newSegment = true;
    out.push(entry);
  }
  return out;
}

async function readAll(path: string): Promise<Judged[]> {
  const out: Judged[] = [];
  for await (const l of readFrameFile(path)) out.push(l);
  return out;
}

let fileCount = 0;
function writeTemp(bytes: Buffer): string {
  const path = join(dir, `f${fileCount++}.ndjson`);
  writeFileSync(path, bytes);
  return path;
}

/** Pieces of a telemetry file, each ending in LF (or CRLF); `i` makes the times of good frames increase. */
const piece = fc.oneof(
  { weight: 8, arbitrary: fc.integer({ min: 1, max: 900 }).map((n) => ({ kind: 'frames', n })) },
  {
    weight: 4,
    arbitrary: fc
      .constantFrom(
        'oops',
        '',
        '   ',
        '\r',
        '{"t_s":1,"tas_mps":NaN,"alt_m":0,"nz":1}',
        '{"t_s":2,"tas_mps":20',
        '\u0001\u0002 noise',
        '[1,2]',
      )
      .map((text) => ({ kind: 'text', text })),
  },
  { weight: 2, arbitrary: fc.constantFrom('é→°', '\uFEFF', 'ü').map((mark) => ({ kind: 'unicode', mark })) },
  {
    weight: 2,
    arbitrary: fc
      .constantFrom(Buffer.from([0xff]), Buffer.from([0xe2, 0x82]), Buffer.from([0xc3]))
      .map((bad) => ({ kind: 'invalid', bad })),
  },
  {
    weight: 1,
    arbitrary: fc
      .constantFrom(FILE_CAP - 1, FILE_CAP, FILE_CAP + 1, 70_000, 140_000)
      .map((length) => ({ kind: 'long', length })),
  },
);

function buildFile(
  pieces: ReadonlyArray<{ kind: string; [k: string]: unknown }>,
  crlf: boolean,
  finalNewline: boolean,
): Buffer {
  const parts: Buffer[] = [];
  const end = crlf ? '\r\n' : '\n';
  let t = 0;
  const next = (): string => frameLine({ t_s: Number((t++ * 0.02).toFixed(2)) });
  for (const p of pieces) {
    if (p.kind === 'frames') parts.push(Buffer.from(Array.from({ length: p['n'] as number }, next).join(end) + end));
    else if (p.kind === 'text') parts.push(Buffer.from((p['text'] as string) + end));
    else if (p.kind === 'unicode')
      parts.push(Buffer.from(next().replace('{', `{"note":"${p['mark'] as string}",`) + end));
    else if (p.kind === 'invalid')
      parts.push(
        Buffer.concat([Buffer.from(next().slice(0, -1) + ',"x":"'), p['bad'] as Buffer, Buffer.from('"}' + end)]),
      );
    else parts.push(Buffer.from('{"t_s":1,"pad":"' + 'x'.repeat((p['length'] as number) - 18) + '"}' + end));
  }
  const bytes = Buffer.concat(parts);
  return finalNewline ? bytes : bytes.subarray(0, bytes.length - end.length);
}

describe('readFrameFile reading by chunks', () => {
  it('gives the lines of judging each physical line alone, whatever crosses a chunk boundary (property)', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(piece, { minLength: 1, maxLength: 12 }),
        fc.boolean(),
        fc.boolean(),
        async (pieces, crlf, finalNewline) => {
          const bytes = buildFile(pieces, crlf, finalNewline);
          expect(await readAll(writeTemp(bytes))).toEqual(judgeEachLine(bytes));
        },
      ),
      { numRuns: 40 },
    );
  });

  it('handles a line running over several chunks and lines of exactly the cap', async () => {
    const bytes = buildFile(
      [
        { kind: 'frames', n: 880 },
        { kind: 'long', length: 200_000 },
        { kind: 'frames', n: 3 },
        { kind: 'long', length: FILE_CAP },
        { kind: 'long', length: FILE_CAP + 1 },
        { kind: 'frames', n: 1000 },
      ],
      false,
      true,
    );
    const lines = await readAll(writeTemp(bytes));
    expect(lines).toEqual(judgeEachLine(bytes));
    expect(lines.filter((l) => !(l.verdict as { ok: boolean }).ok).map((l) => l.lineNo)).toEqual([881, 885, 886]);
  });

  it('reads the exact bytes of each record of a recording holding multi-byte text and invalid bytes', async () => {
    const t0 = 1_700_000_000_000;
    const sent = Array.from({ length: 4000 }, (_, i) =>
      i % 7 === 3
        ? Buffer.from(frameLine({ t_s: i, note: 'é→°' }))
        : i % 11 === 5
          ? Buffer.from([0x7b, 0xff, 0x7d])
          : Buffer.from(frameLine({ t_s: i })),
    );
    const path = join(dir, 'unicode.tmrec');
    writeFileSync(path, Buffer.concat([encodeHeader('test', t0), ...sent.map((b, i) => encodeLine(t0 + i, b, false))]));
    const lines = await readAll(path);
    expect(lines.map((l) => l.text)).toEqual(sent.map((b) => b.toString('utf8')));
    expect(lines.map((l) => (l as { receivedAtMs?: number }).receivedAtMs! - t0)).toEqual(sent.map((_b, i) => i));
  });

  it('yields the same lines in batches, in file order', async () => {
    const bytes = buildFile(
      [
        { kind: 'frames', n: 3000 },
        { kind: 'text', text: 'oops' },
        { kind: 'frames', n: 10 },
      ],
      false,
      true,
    );
    const path = writeTemp(bytes);
    const batched: Judged[] = [];
    let batches = 0;
    for await (const batch of readFrameBatches(path)) {
      batches += 1;
      batched.push(...batch);
    }
    expect(batches).toBeGreaterThan(1);
    expect(batched).toEqual(await readAll(path));
  });
});

/** Accepted frames (with the restart mark) and rejected lines, as readFrameFile gives them. */
async function framesAndRejects(
  path: string,
): Promise<{ frames: Array<[Frame, boolean]>; rejects: Array<[number, Rejected]> }> {
  const frames: Array<[Frame, boolean]> = [];
  const rejects: Array<[number, Rejected]> = [];
  for await (const l of readFrameFile(path)) {
    if (l.verdict.ok) frames.push([l.verdict.frame, l.newSegment === true || l.afterReconnect === true]);
    else {
      // The packed batch carries what every output shows: words, code, key, value (not the words' inner detail).
      const { detail: _detail, ...carried } = l.verdict;
      rejects.push([l.lineNo, carried]);
    }
  }
  return { frames, rejects };
}

/**
 * The frames and rejections of readFramePackedBatches. `reuse`: as the review in one thread does, each batch's
 * arrays go back to a pool the reader fills again (seeded with arrays full of a number no frame holds, so that a
 * slot left unwritten would show); otherwise, as the review alongside a worker, they leave for another thread.
 */
async function packedFramesAndRejects(
  path: string,
  reuse = false,
): Promise<{ frames: Array<[Frame, boolean]>; rejects: Array<[number, Rejected]> }> {
  const frames: Array<[Frame, boolean]> = [];
  const rejects: Array<[number, Rejected]> = [];
  const batchPool = createPackedBatchPool();
  if (reuse) batchPool.give({ frames: new Float64Array(1024 * FRAME_SLOTS).fill(7.25), lineNos: new Int32Array(1024) });
  const options = reuse ? { batchPool, readChunkBytes: 1024 } : {};
  for await (const batch of readFramePackedBatches(path, options)) {
    expect(batch.frames.length).toBeGreaterThanOrEqual(batch.count * FRAME_SLOTS);
    for (let i = 0; i < batch.count; i++)
      frames.push([unpackFrame(batch.frames, i), packedNewSegment(batch.frames, i)]);
    for (const { lineNo, rejected } of unpackRejects(batch.rejects)) rejects.push([lineNo, rejected]);
    if (reuse) {
      batchPool.give(batch);
      continue;
    }
    // As the review alongside a worker does: the batch's array goes to another thread, leaving it detached here.
    structuredClone(batch.frames.buffer, { transfer: [batch.frames.buffer] });
  }
  return { frames, rejects };
}

describe('packed batches for the review worker', () => {
  it('pack and unpack give back an equal frame, -0 and absent keys included', () => {
    const frames: Frame[] = [
      { tS: 1.5, airspeedKind: 'tas', airspeedMps: 20, altM: -0 },
      { tS: -0, airspeedKind: 'cas', airspeedMps: 0, altM: 20_000, bankDeg: -180, nz: 20, oatC: -0, massKg: 10_000 },
      { tS: 3, airspeedKind: 'ias', airspeedMps: 12.25, altM: 100, nz: -1.5 },
    ];
    const packed = new Float64Array(frames.length * FRAME_SLOTS);
    frames.forEach((f, i) => packFrame(packed, i, f, i === 1));
    frames.forEach((f, i) => {
      const back = unpackFrame(packed, i);
      expect(back).toEqual(f);
      expect(Object.keys(back)).toEqual(Object.keys(f));
      for (const key of Object.keys(f) as Array<keyof Frame>) expect(Object.is(back[key], f[key])).toBe(true);
      expect(packedNewSegment(packed, i)).toBe(i === 1);
    });
  });

  it('carry the frames and rejections of readFrameFile, in order, whatever the file holds (property)', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(piece, { minLength: 1, maxLength: 12 }),
        fc.boolean(),
        fc.boolean(),
        async (pieces, crlf, finalNewline) => {
          const path = writeTemp(buildFile(pieces, crlf, finalNewline));
          const packed = await packedFramesAndRejects(path);
          const expected = await framesAndRejects(path);
          expect(packed).toEqual(expected);
          // Arrays filled again batch after batch carry the same frames.
          expect(await packedFramesAndRejects(path, true)).toEqual(expected);
          packed.frames.forEach(([f], i) => expect(Object.is(f.altM, expected.frames[i]![0].altM)).toBe(true));
        },
      ),
      { numRuns: 30 },
    );
  });

  it('carry clock restarts, reconnects of a recording and CSV rows like readFrameFile', async () => {
    const clock = Array.from({ length: 40 }, (_, i) => frameLine({ t_s: i < 20 ? 100 + i : i - 20 }));
    const ndjson = join(dir, 'restart.ndjson');
    writeFileSync(
      ndjson,
      [
        'radio boot',
        ...clock,
        '{"t_s":5,"tas_mps":20,"alt_m":0,"nz":1}',
        '{"t_s" : 50, "tas_mps" : 20, "alt_m" : 0, "nz" : 1}',
      ].join('\n'),
    );
    const t0 = 1_700_000_000_000;
    const recording = join(dir, 'reconnect.tmrec');
    writeFileSync(
      recording,
      Buffer.concat([
        encodeHeader('test link', t0),
        encodeLinkEvent(t0, 'open'),
        ...clock.slice(0, 10).map((l, i) => encodeLine(t0 + i, Buffer.from(l), false)),
        encodeLinkEvent(t0 + 20, 'open'),
        ...clock.slice(0, 10).map((l, i) => encodeLine(t0 + 30 + i, Buffer.from(l), false)),
      ]),
    );
    const csv = join(dir, 'rows.csv');
    writeFileSync(csv, 't_s,tas_mps,alt_m,nz\n0,20,100,1\n1,fast,100,1\n2,21,100,1.1\n');
    for (const path of [ndjson, recording, csv]) {
      const packed = await packedFramesAndRejects(path);
      expect(packed).toEqual(await framesAndRejects(path));
      expect(packed.frames.length).toBeGreaterThan(0);
    }
    const restarted = await packedFramesAndRejects(ndjson);
    expect(restarted.frames.filter(([, newSegment]) => newSegment)).toHaveLength(1);
    const reconnected = await packedFramesAndRejects(recording);
    expect(reconnected.frames.map(([, mark]) => mark).indexOf(true)).toBe(10);
  });
});
