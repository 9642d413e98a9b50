import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import {
  checkMappingFits,
  readFrameFile,
  readFramePackedBatches,
  type FileLine,
} from '../../src/decode/read-frames.js';
import { encodeHeader, encodeLine, encodeLinkEvent } from '../../src/recording/format.js';
import { frameLine } from '../helpers/frames.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-read-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const fixture = (name: string): string => join(import.meta.dirname, '..', 'fixtures', name);

async function readAll(path: string, mappingPath?: string): Promise<FileLine[]> {
  const out: FileLine[] = [];
  for await (const l of readFrameFile(path, mappingPath ? { mappingPath } : {})) out.push(l);
  return out;
}

function brief(lines: FileLine[]): string[] {
  return lines.map((l) => `${l.lineNo}:${l.verdict.ok ? `ok ${l.verdict.frame.tS}` : l.verdict.reason}`);
}

describe('readFrameFile', () => {
  it('reads NDJSON with physical line numbers, skipping blank lines', async () => {
    const path = join(dir, 'a.ndjson');
    writeFileSync(
      path,
      [frameLine({ t_s: 0 }), '', 'oops', '   ', frameLine({ t_s: 1 }), frameLine({ t_s: 0.5 })].join('\n'),
    );
    expect(brief(await readAll(path))).toEqual(['1:ok 0', '3:invalid JSON', '5:ok 1', '6:time not increasing']);
  });

  it('detects NDJSON without an extension and CSV from a header line', async () => {
    const path = join(dir, 'noext');
    writeFileSync(path, frameLine({ t_s: 2 }) + '\n');
    expect(brief(await readAll(path))).toEqual(['1:ok 2']);
    const noisy = join(dir, 'noisy.log');
    writeFileSync(noisy, 'radio boot v2\n' + frameLine({ t_s: 3 }) + '\n');
    expect(brief(await readAll(noisy))).toEqual(['1:invalid JSON', '2:ok 3']);
    const csv = join(dir, 'flight.log');
    writeFileSync(csv, '"t_s",tas_mps,alt_m,nz\n0,20,100,1\n');
    expect(brief(await readAll(csv))).toEqual(['2:ok 0']);
  });

  it('reads CSV with comment lines, empty cells and bad cells', async () => {
    const lines = await readAll(fixture('frames-basic.csv'));
    expect(brief(lines)).toEqual([
      '4:ok 0',
      '6:ok 0.1',
      '7:tas_mps must be a number from 0 to 300 m/s (got "fast")',
      '8:expected 6 columns (got 5)',
      '9:ok 0.4',
    ]);
    const second = lines[1]!.verdict;
    expect(second.ok && second.frame).toEqual({
      tS: 0.1,
      airspeedKind: 'tas',
      airspeedMps: 20,
      altM: 100,
      bankDeg: 10,
      oatC: 15,
    });
  });

  it('reads a foreign log through a mapping file, converting units', async () => {
    const lines = await readAll(fixture('frames-foreign.csv'), fixture('frames-foreign-mapping.json'));
    expect(lines.map((l) => l.verdict.ok)).toEqual([true, true, true]);
    const f = lines[1]!.verdict.ok ? lines[1]!.verdict.frame : undefined;
    // Exact definitions: 1 kt = 1852/3600 m/s, 1 ft = 0.3048 m (international yard and pound), g0 = 9.80665 m/s²
    // (USSA 1976), °C = (°F − 32)·5/9; 0.5236 rad = 30.0000 deg.
    expect(f?.tS).toBeCloseTo(0.1, 12);
    expect(f?.airspeedKind).toBe('ias');
    expect(f?.airspeedMps).toBeCloseTo((38.9 * 1852) / 3600, 10);
    expect(f?.altM).toBeCloseTo(328.1 * 0.3048, 10);
    expect(f?.bankDeg).toBeCloseTo(30.0001, 3);
    expect(f?.nz).toBeCloseTo(11.33 / 9.80665, 10);
    expect(f?.oatC).toBeCloseTo(15, 10);
  });

  it('reads a recording back, line for line, restarting the time check after a reconnect', async () => {
    const path = join(dir, 'rec.tmrec');
    const t0 = 1_700_000_000_000;
    writeFileSync(
      path,
      Buffer.concat([
        encodeHeader('test link', t0),
        encodeLinkEvent(t0, 'open'),
        encodeLine(t0 + 1, Buffer.from(frameLine({ t_s: 50 }) + '\r'), false),
        encodeLine(t0 + 2, Buffer.from([0x00, 0x41, 0x09, 0xff]), false),
        encodeLinkEvent(t0 + 3, 'lost', 'port disappeared'),
        encodeLinkEvent(t0 + 400, 'open'),
        encodeLine(t0 + 401, Buffer.from(frameLine({ t_s: 1 })), false),
        encodeLine(t0 + 402, Buffer.from('x'.repeat(10)), true),
      ]),
    );
    const lines = await readAll(path);
    expect(brief(lines)).toEqual([
      '5:ok 50',
      '6:binary noise (control or invalid bytes)',
      '9:ok 1',
      '10:line longer than 65536 bytes (cut)',
    ]);
    expect(lines.map((l) => l.receivedAtMs! - t0)).toEqual([1, 2, 401, 402]);
    expect(lines[2]!.afterReconnect).toBe(true);
    expect(lines[0]!.text).toBe(frameLine({ t_s: 50 }));
  });

  it('throws an InputError naming the file when it cannot be read', async () => {
    await expect(readAll(join(dir, 'missing.ndjson'))).rejects.toThrow(InputError);
    await expect(readAll(join(dir, 'missing.ndjson'))).rejects.toThrow(
      /missing\.ndjson: cannot read the telemetry file \(no such file\)/,
    );
    await expect(readAll(dir)).rejects.toThrow(/is a directory/);
  });

  it('refuses a mapping whose column is not in the CSV header, naming the columns there are', async () => {
    const mapping = join(dir, 'm.json');
    writeFileSync(
      mapping,
      JSON.stringify({
        delimiter: ';',
        keys: {
          t_s: { column: 'time_ms', unit: 'ms' },
          ias_mps: { column: 'KIAS', unit: 'kt' },
          alt_m: { column: 'baro_ft', unit: 'ft' },
          bank_deg: { column: 'missingcol', unit: 'deg' },
        },
      }),
    );
    const expected =
      'm.json: keys.bank_deg.column "missingcol" is not a column of frames-foreign.csv (columns: time_ms, KIAS, baro_ft, roll_rad, acc_z_mps2, oat_F, note)';
    const err = await readAll(fixture('frames-foreign.csv'), mapping).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).problems).toEqual([expected]);
    // The up-front check for commands that read the file later, and the reader that packs frames for another
    // thread (review), say the same.
    await expect(checkMappingFits(fixture('frames-foreign.csv'), mapping)).rejects.toThrow(expected);
    await expect(
      checkMappingFits(fixture('frames-foreign.csv'), fixture('frames-foreign-mapping.json')),
    ).resolves.toBeUndefined();
    const packed = await (async () => {
      for await (const _batch of readFramePackedBatches(fixture('frames-foreign.csv'), { mappingPath: mapping })) {
        /* drain */
      }
    })().catch((e: unknown) => e);
    expect(packed).toBeInstanceOf(InputError);
    expect((packed as InputError).problems).toEqual([expected]);
  });

  it('refuses a mapping given with a file that has no CSV header line', async () => {
    const mapping = join(dir, 'm2.json');
    writeFileSync(mapping, JSON.stringify({ keys: { tas_mps: { column: 'V', unit: 'kt' } } }));
    const ndjson = join(dir, 'log.txt');
    writeFileSync(ndjson, `# comment\n${frameLine({ t_s: 0 })}\n`);
    await expect(readAll(ndjson, mapping)).rejects.toThrow(
      'm2.json: a mapping applies to CSV logs with a header line, but log.txt is NDJSON (its first line is a JSON object, not a header)',
    );
    const named = join(dir, 'log.ndjson');
    writeFileSync(named, 'V,alt_m\n');
    await expect(readAll(named, mapping)).rejects.toThrow(
      'm2.json: a mapping applies to CSV logs with a header line, but log.ndjson is NDJSON (by its name)',
    );
    const plain = join(dir, 'log.dat');
    writeFileSync(plain, 'V;alt_m\n1;2\n');
    await expect(readAll(plain, mapping)).rejects.toThrow(
      `m2.json: a mapping applies to CSV logs with a header line, but log.dat has no header line with the mapping's delimiter "," (first line: "V;alt_m")`,
    );
    const rec = join(dir, 'm.tmrec');
    writeFileSync(
      rec,
      Buffer.concat([
        encodeHeader('test link', 1_700_000_000_000),
        encodeLine(1_700_000_000_001, Buffer.from(frameLine({ t_s: 0 })), false),
      ]),
    );
    await expect(readAll(rec, mapping)).rejects.toThrow(
      'm2.json: a mapping applies to CSV logs with a header line, but m.tmrec is a turnmargin recording',
    );
    await expect(checkMappingFits(ndjson, mapping)).rejects.toThrow(InputError);
  });

  it('names each problem of a bad mapping file', async () => {
    const mapping = join(dir, 'bad-mapping.json');
    writeFileSync(
      mapping,
      JSON.stringify({ keys: { tas_mps: { column: 'V', unit: 'ft' }, speed: { column: 'x', unit: 'm/s' } } }),
    );
    const err = await readAll(fixture('frames-foreign.csv'), mapping).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).problems).toEqual([
      'bad-mapping.json: keys.tas_mps.unit must be one of m/s, kt, km/h, mph for tas_mps (got "ft")',
      expect.stringMatching(/^bad-mapping\.json: keys\.speed is not a frame key/),
    ]);
  });

  it('reads a large file in bounded memory', async () => {
    const path = join(dir, 'big.ndjson');
    const block = Array.from({ length: 1000 }, (_, i) => frameLine({ t_s: i / 1000 })).join('\n') + '\n';
    // 200 blocks with times increasing block by block.
    writeFileSync(
      path,
      Array.from({ length: 200 }, (_, b) =>
        block.replace(/"t_s":([0-9.e-]+)/g, (_m, t: string) => `"t_s":${b + Number(t)}`),
      ).join(''),
    );
    let count = 0;
    let accepted = 0;
    const before = process.memoryUsage().heapUsed;
    let peak = before;
    for await (const l of readFrameFile(path)) {
      count += 1;
      if (l.verdict.ok) accepted += 1;
      if (count % 20_000 === 0) peak = Math.max(peak, process.memoryUsage().heapUsed);
    }
    expect(count).toBe(200_000);
    expect(accepted).toBe(200_000);
    // The file is ~14 MB; the heap must not have grown by anything like it.
    expect(peak - before).toBeLessThan(40 * 1024 * 1024);
  });
});
