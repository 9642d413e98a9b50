import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { loadAircraftFile } from '../../src/cli/load.js';
import { createPipeline } from '../../src/engine/pipeline.js';
import { decodeEntry } from '../../src/recording/format.js';
import { openRecorder } from '../../src/recording/recorder.js';
import { createSerialSource } from '../../src/sources/serial.js';
import type { SourceStatus } from '../../src/sources/source.js';
import { startPtyLink } from '../helpers/pty-link.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-serial-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const aircraft = loadAircraftFile(join(import.meta.dirname, '..', 'fixtures', 'example-airframe.json'));

describe('serial source on a real pseudo-terminal', () => {
  it('receives 1 200 frames exactly once and in order across an unplug and replug at the same path; noise is rejected and recorded', async () => {
    const link = startPtyLink();
    const portPath = join(dir, 'radio0'); // a symlink we control, re-pointed at the new pty on replug
    const recordPath = join(dir, 'serial.tmrec');
    const seqs: number[] = [];
    const rejected: string[] = [];
    const statuses: SourceStatus[] = [];
    const source = createSerialSource({ path: portPath, baudRate: 115200 });
    const recorder = openRecorder({ path: recordPath, sourceLabel: source.label });
    const pipeline = createPipeline({
      source,
      aircraft,
      recorder,
      sinks: {
        record: (_rec, line) => seqs.push((line.verdict.ok && (line.verdict.raw['seq'] as number)) || 0),
        rejected: (_line, _where, reason) => rejected.push(reason),
        status: (s) => statuses.push(s),
      },
    });
    const opens = (): number => statuses.filter((s) => s.kind === 'open').length;
    try {
      expect(await link.command(`plug ${portPath}`)).toMatch(/^plugged \/dev\/pts\//);
      pipeline.start();
      await expect.poll(opens, { timeout: 5000 }).toBe(1);

      expect(await link.command('send 0 600')).toMatch(/^sent 600 \d+/);
      await expect.poll(() => seqs.length, { timeout: 10_000 }).toBe(600);

      expect(await link.command('unplug')).toBe('unplugged');
      await expect.poll(() => statuses.some((s) => s.kind === 'lost'), { timeout: 5000 }).toBe(true);
      expect(pipeline.health().state).toBe('lost');

      expect(await link.command(`plug ${portPath}`)).toMatch(/^plugged/);
      await expect.poll(opens, { timeout: 5000 }).toBe(2);
      expect(await link.command('send 600 600')).toMatch(/^sent 600 \d+/);
      await expect.poll(() => seqs.length, { timeout: 10_000 }).toBe(1200);
    } finally {
      await pipeline.stop();
      await link.close();
    }
    expect(seqs).toEqual(Array.from({ length: 1200 }, (_, i) => i));
    // A noise line every 250 frames: 2 in the first 600, 2 in the second.
    expect(rejected).toEqual(Array(4).fill('binary noise (control or invalid bytes)'));
    const health = pipeline.health();
    expect(health.reconnects).toBe(1);
    expect(health.accepted).toBe(1200);
    expect(health.rejected).toBe(4);

    const records = readFileSync(recordPath)
      .subarray(0, -1)
      .toString('latin1')
      .split('\n')
      .map((r) => decodeEntry(Buffer.from(r, 'latin1')));
    const lines = records.filter((r) => r.kind === 'line');
    expect(lines).toHaveLength(1204);
    const noise = lines.filter((r) => r.kind === 'line' && r.bytes.includes(Buffer.from('NOISE')));
    expect(noise).toHaveLength(4);
    expect(
      noise[0]!.kind === 'line' &&
        noise[0]!.bytes.equals(Buffer.from([0x00, 0xff, 0xfe, ...Buffer.from('NOISE'), 0x01])),
    ).toBe(true);
    expect(records.filter((r) => r.kind === 'link').map((r) => r.kind === 'link' && r.state)).toEqual([
      'open',
      'lost',
      'open',
      'ended',
    ]);
  });

  it('reports an open port whose path vanished as lost although the driver never says so, and reopens it when it comes back', async () => {
    // The driver misses some hang-ups (a terminal that reads zero bytes for ever); a gone path is the sign it has.
    const link = startPtyLink();
    const portPath = join(dir, 'radio1');
    const statuses: SourceStatus[] = [];
    const source = createSerialSource({ path: portPath, retryDelayMs: () => 20, portCheckMs: 50 });
    try {
      expect(await link.command(`plug ${portPath}`)).toMatch(/^plugged \/dev\/pts\//);
      source.start({ onLine: () => undefined, onStatus: (s) => statuses.push(s) });
      await expect.poll(() => statuses.filter((s) => s.kind === 'open').length, { timeout: 5000 }).toBe(1);
      expect(await link.command('vanish')).toBe('vanished');
      await expect.poll(() => statuses.filter((s) => s.kind === 'lost').length, { timeout: 5000 }).toBe(1);
      expect(statuses.find((s) => s.kind === 'lost')!.detail).toBe('port disappeared');
      expect(await link.command(`plug ${portPath}`)).toMatch(/^plugged/);
      await expect.poll(() => statuses.filter((s) => s.kind === 'open').length, { timeout: 5000 }).toBe(2);
    } finally {
      await source.stop();
      await link.close();
    }
    expect(statuses.map((s) => s.kind)).toEqual(['connecting', 'open', 'lost', 'open']);
  });

  it('reports a port that does not exist as lost and keeps retrying without crashing', async () => {
    const statuses: SourceStatus[] = [];
    const source = createSerialSource({ path: join(dir, 'nothing-here'), retryDelayMs: () => 20 });
    source.start({ onLine: () => undefined, onStatus: (s) => statuses.push(s) });
    await new Promise((r) => setTimeout(r, 150));
    await source.stop();
    expect(statuses[0]!.kind).toBe('connecting');
    expect(statuses[1]!.kind).toBe('lost');
    expect(statuses[1]!.detail).toMatch(/nothing-here: no such port yet; waiting for it to appear/);
    expect(statuses.filter((s) => s.kind === 'lost')).toHaveLength(1); // one report per outage
  });
});
