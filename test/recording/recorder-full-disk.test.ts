/**
 * The recorder on a full disk: it writes whole records only, counts exactly the lines it could not write, marks
 * where they were, and keeps going once there is room again. Once on a real small file system (a 64 KiB tmpfs,
 * where mounting is permitted: root on Linux), and always through a fault-injecting writer that behaves like a
 * small disk (short writes, then ENOSPC), for regular files and for pipes/devices.
 */
import { execFileSync } from 'node:child_process';
import { ftruncateSync, mkdtempSync, readFileSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeEntry, RECORDING_MAGIC } from '../../src/recording/format.js';
import { openRecorder, type RecorderIo } from '../../src/recording/recorder.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-rec-full-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const T0 = 1_767_225_600_000;

/** Distinct lines of varied length (so that records straddle any write boundary). */
const lineOf = (i: number): string =>
  JSON.stringify({ t_s: i / 100, tas_mps: 20, alt_m: 100, seq: i, pad: 'x'.repeat(i % 37) });

interface Parsed {
  lines: string[];
  notRecorded: number[];
  otherMeta: string[];
}

/** Every record of the file must decode as a whole record: a line we sent, a #link, the header or #not-recorded. */
function parseRecording(path: string, sent: Set<string>): Parsed {
  const text = readFileSync(path, 'latin1');
  expect(text.endsWith('\n')).toBe(true);
  const records = text.slice(0, -1).split('\n');
  expect(records.slice(0, 1)).toEqual([RECORDING_MAGIC]);
  const out: Parsed = { lines: [], notRecorded: [], otherMeta: [] };
  for (const r of records) {
    const e = decodeEntry(Buffer.from(r, 'latin1'));
    if (e.kind === 'line') {
      const s = e.bytes.toString('latin1');
      // Whole: exactly one of the lines sent (a merged or cut record would not be).
      expect(sent.has(s), `record is not one whole sent line: ${JSON.stringify(r.slice(0, 80))}`).toBe(true);
      out.lines.push(s);
    } else if (e.kind === 'meta' && e.text.startsWith('#not-recorded')) {
      const m = /^#not-recorded \d+ (\d+) lines \(disk full\)$/.exec(e.text);
      expect(m, e.text).not.toBeNull();
      out.notRecorded.push(Number(m![1]));
    } else {
      expect(e.kind === 'meta' || e.kind === 'link', r).toBe(true);
      if (e.kind === 'meta') out.otherMeta.push(e.text);
    }
  }
  return out;
}

function enospc(): Error {
  return Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' });
}

/** A disk of `capacity` bytes for one file: writes past it are short, then fail with ENOSPC. */
function smallDisk(options: { capacity: number; regular: boolean }) {
  let capacity = options.capacity;
  let sequentialEnd = 0;
  const io: RecorderIo = {
    write(fd, buffer, offset, length, position) {
      const at = position ?? sequentialEnd;
      const room = Math.max(0, capacity - at);
      const n = Math.min(length, room);
      if (n === 0) throw enospc();
      const wrote = writeSync(fd, buffer, offset, n, position);
      if (position === null) sequentialEnd += wrote;
      return wrote;
    },
    truncate(fd, length) {
      if (!options.regular) throw Object.assign(new Error('EINVAL'), { code: 'EINVAL' });
      ftruncateSync(fd, length);
    },
    isRegularFile: () => options.regular,
  };
  return { io, grow: (bytes: number) => (capacity += bytes) };
}

describe('recorder on a full disk (fault-injecting writer)', () => {
  for (const regular of [true, false]) {
    it(`writes whole records only, counts exactly the lines not written, and resumes when there is room (${regular ? 'regular file' : 'pipe or device'})`, () => {
      const path = join(dir, `inject-${regular ? 'file' : 'pipe'}.tmrec`);
      const disk = smallDisk({ capacity: 3000, regular });
      const rec = openRecorder({ path, sourceLabel: 'test', clock: () => T0, io: disk.io, maxUnwrittenBytes: 4000 });
      const sent: string[] = [];
      const send = (count: number): void => {
        for (let k = 0; k < count; k++) {
          const s = lineOf(sent.length);
          sent.push(s);
          rec.writeLine({ bytes: Buffer.from(s), receivedAtMs: T0 + sent.length, cut: false });
        }
        rec.flush();
      };
      send(20);
      expect(rec.error()).toBeNull();
      send(200); // the disk fills up: a short write, then ENOSPC; the backlog overflows and lines are dropped
      expect(rec.error()).toMatch(/^recording write failed: disk full; \d+ lines not written$/);
      expect(rec.linesNotWritten()).toBeGreaterThan(0);
      const droppedWhileFull = rec.linesNotWritten();
      expect(rec.error()).toContain(`${droppedWhileFull} lines not written`);
      disk.grow(1_000_000); // room again
      rec.flush();
      expect(rec.error()).toBe(`recording incomplete: ${droppedWhileFull} lines not written (disk full)`);
      send(30);
      // The count stays visible after writing resumed.
      expect(rec.error()).toBe(`recording incomplete: ${droppedWhileFull} lines not written (disk full)`);
      rec.close();

      const parsed = parseRecording(path, new Set(sent));
      // Every line is either in the file, whole and in order, or counted: nothing merged, nothing miscounted.
      expect(parsed.lines.length + rec.linesNotWritten()).toBe(sent.length);
      expect(rec.linesNotWritten()).toBe(droppedWhileFull);
      const positions = parsed.lines.map((l) => sent.indexOf(l));
      expect(positions).toEqual([...positions].sort((a, b) => a - b));
      expect(parsed.notRecorded.reduce((a, b) => a + b, 0)).toBe(rec.linesNotWritten());
      // The first lines and the last ones (written after the disk had room again) are all there.
      expect(parsed.lines.slice(0, 20)).toEqual(sent.slice(0, 20));
      expect(parsed.lines.slice(-30)).toEqual(sent.slice(-30));
      expect(rec.bytesWritten()).toBe(readFileSync(path).length);
    });
  }

  it('counts the lines still unwritten at close as not written, and leaves no cut record at the end', () => {
    const path = join(dir, 'inject-close.tmrec');
    const disk = smallDisk({ capacity: 1500, regular: true });
    const rec = openRecorder({ path, sourceLabel: 'test', clock: () => T0, io: disk.io });
    const sent = Array.from({ length: 100 }, (_, i) => lineOf(i));
    sent.forEach((s, i) => rec.writeLine({ bytes: Buffer.from(s), receivedAtMs: T0 + i, cut: false }));
    rec.close();
    const parsed = parseRecording(path, new Set(sent));
    expect(parsed.lines).toEqual(sent.slice(0, parsed.lines.length));
    expect(parsed.lines.length).toBeGreaterThan(5);
    expect(rec.linesNotWritten()).toBe(sent.length - parsed.lines.length);
    expect(rec.error()).toBe(`recording write failed: disk full; ${rec.linesNotWritten()} lines not written`);
  });
});

/** Mount a small tmpfs (root on Linux only); null when not permitted here. */
function mountSmallTmpfs(): { path: string; unmount(): void } | null {
  if (process.platform !== 'linux' || process.getuid?.() !== 0) return null;
  const path = mkdtempSync(join(tmpdir(), 'tm-tmpfs-'));
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', 'size=64k', 'tmpfs', path], { stdio: 'ignore' });
  } catch {
    rmSync(path, { recursive: true, force: true });
    return null;
  }
  return {
    path,
    unmount() {
      execFileSync('umount', [path], { stdio: 'ignore' });
      rmSync(path, { recursive: true, force: true });
    },
  };
}

describe('recorder on a real full file system', () => {
  const fs = mountSmallTmpfs();
  it.skipIf(fs === null)(
    'on a 64 KiB tmpfs: every record in the file is whole, the count of lines not written is exact, and recording resumes when space is freed',
    () => {
      const mounted = fs!;
      try {
        const filler = join(mounted.path, 'filler');
        writeFileSync(filler, Buffer.alloc(40 * 1024, 0x41));
        const path = join(mounted.path, 'flight.tmrec');
        const rec = openRecorder({ path, sourceLabel: 'test', clock: () => T0, maxUnwrittenBytes: 8 * 1024 });
        const sent: string[] = [];
        const send = (count: number): void => {
          for (let k = 0; k < count; k++) {
            const s = lineOf(sent.length);
            sent.push(s);
            rec.writeLine({ bytes: Buffer.from(s), receivedAtMs: T0 + sent.length, cut: false });
            if (k % 10 === 0) rec.flush();
          }
          rec.flush();
        };
        send(600); // about 55 KB of records into the 24 KiB left
        expect(rec.error()).toMatch(/^recording write failed: disk full; \d+ lines not written$/);
        rmSync(filler); // space again
        rec.flush();
        const droppedWhileFull = rec.linesNotWritten();
        expect(droppedWhileFull).toBeGreaterThan(0);
        send(50);
        rec.close();
        expect(rec.error()).toBe(`recording incomplete: ${droppedWhileFull} lines not written (disk full)`);
        const parsed = parseRecording(path, new Set(sent));
        expect(parsed.lines.length + rec.linesNotWritten()).toBe(sent.length);
        expect(parsed.notRecorded.reduce((a, b) => a + b, 0)).toBe(rec.linesNotWritten());
        expect(parsed.lines.slice(-50)).toEqual(sent.slice(-50));
      } finally {
        mounted.unmount();
      }
    },
  );
});
