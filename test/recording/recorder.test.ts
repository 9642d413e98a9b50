import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import { readFrameFile } from '../../src/decode/read-frames.js';
import { decodeEntry, RECORDING_MAGIC } from '../../src/recording/format.js';
import { openRecorder } from '../../src/recording/recorder.js';
import { frameLine } from '../helpers/frames.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-rec-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const T0 = 1_767_225_600_000; // 2026-01-01T00:00:00Z

describe('recorder', () => {
  it('writes every line verbatim with its receive time, and link events', () => {
    const path = join(dir, 'a.tmrec');
    const rec = openRecorder({ path, sourceLabel: 'serial /dev/ttyX @ 57600', clock: () => T0 });
    const noise = Buffer.from([0x00, 0xff, 0x09, 0x0d]);
    rec.writeStatus({ kind: 'open', atMs: T0 });
    rec.writeLine({ bytes: Buffer.from(frameLine({ t_s: 1 })), receivedAtMs: T0 + 5, cut: false });
    rec.writeLine({ bytes: noise, receivedAtMs: T0 + 6, cut: false });
    rec.writeStatus({ kind: 'lost', atMs: T0 + 7, detail: 'port disappeared' });
    rec.close();
    const file = readFileSync(path);
    const records = file.toString('latin1').split('\n');
    expect(records.slice(0, 3)).toEqual([
      RECORDING_MAGIC,
      '#source serial /dev/ttyX @ 57600',
      '#started 2026-01-01T00:00:00.000Z',
    ]);
    expect(records[3]).toBe(`#link ${T0} open`);
    expect(records[4]).toBe(`${T0 + 5}\t${frameLine({ t_s: 1 })}`);
    const noiseEntry = decodeEntry(Buffer.from(records[5]!, 'latin1'));
    expect(noiseEntry.kind === 'line' && noiseEntry.bytes.equals(noise)).toBe(true);
    expect(records[6]).toBe(`#link ${T0 + 7} lost port disappeared`);
    expect(rec.bytesWritten()).toBe(file.length);
  });

  it('refuses to overwrite an existing file unless forced', () => {
    const path = join(dir, 'exists.tmrec');
    writeFileSync(path, 'precious');
    expect(() => openRecorder({ path, sourceLabel: 'x' })).toThrow(InputError);
    expect(() => openRecorder({ path, sourceLabel: 'x' })).toThrow(/exists; choose another name or add --force/);
    expect(readFileSync(path, 'utf8')).toBe('precious');
    const rec = openRecorder({ path, sourceLabel: 'x', force: true });
    rec.close();
    expect(readFileSync(path, 'utf8').startsWith(RECORDING_MAGIC)).toBe(true);
  });

  it('names a directory that does not exist', () => {
    expect(() => openRecorder({ path: join(dir, 'no', 'such', 'x.tmrec'), sourceLabel: 'x' })).toThrow(
      /cannot create the recording file \(no such directory\)/,
    );
  });

  it('flushes on its timer without being closed', async () => {
    const path = join(dir, 'timer.tmrec');
    const rec = openRecorder({ path, sourceLabel: 'x', flushIntervalMs: 20 });
    rec.writeLine({ bytes: Buffer.from('hello'), receivedAtMs: T0, cut: false });
    await expect.poll(() => readFileSync(path, 'utf8'), { timeout: 2000 }).toContain(`${T0}\thello\n`);
    rec.close();
  });

  it('flushes on time while the event loop is kept busy (its timer cannot run): a flood is on disk as it arrives', () => {
    const path = join(dir, 'busy.tmrec');
    const rec = openRecorder({ path, sourceLabel: 'x', flushIntervalMs: 50 });
    const start = performance.now();
    let pushed = 0;
    let pushedBy100Ms = 0;
    // 300 ms without yielding to the event loop.
    while (performance.now() - start < 300) {
      rec.writeLine({ bytes: Buffer.from(`junk ${pushed}`), receivedAtMs: T0, cut: false });
      pushed += 1;
      if (performance.now() - start < 100) pushedBy100Ms = pushed;
    }
    const onDisk = readFileSync(path, 'utf8')
      .split('\n')
      .filter((l) => l.startsWith(`${T0}\t`)).length;
    expect(pushedBy100Ms).toBeGreaterThan(0);
    expect(onDisk).toBeGreaterThanOrEqual(pushedBy100Ms);
    rec.close();
  });

  it('reports a full disk and keeps accepting lines', () => {
    if (!existsSync('/dev/full')) return; // Linux device whose writes fail with ENOSPC
    const rec = openRecorder({ path: '/dev/full', sourceLabel: 'x', force: true });
    rec.writeLine({ bytes: Buffer.from('a'), receivedAtMs: T0, cut: false });
    rec.flush();
    expect(rec.error()).toBe('recording write failed: disk full');
    expect(() => rec.writeLine({ bytes: Buffer.from('b'), receivedAtMs: T0, cut: false })).not.toThrow();
    expect(() => rec.close()).not.toThrow();
  });

  it('replays a recording of live lines as the same frames', async () => {
    const path = join(dir, 'roundtrip.tmrec');
    const rec = openRecorder({ path, sourceLabel: 'x' });
    const sent = [frameLine({ t_s: 0 }), 'garbage', frameLine({ t_s: 0.1 }) + '\r', frameLine({ t_s: 0.2 })];
    rec.writeStatus({ kind: 'open', atMs: T0 });
    sent.forEach((s, i) => rec.writeLine({ bytes: Buffer.from(s), receivedAtMs: T0 + i, cut: false }));
    rec.close();
    const got: string[] = [];
    for await (const l of readFrameFile(path)) got.push(l.verdict.ok ? `ok ${l.verdict.frame.tS}` : l.verdict.reason);
    expect(got).toEqual(['ok 0', 'invalid JSON', 'ok 0.1', 'ok 0.2']);
  });
});
