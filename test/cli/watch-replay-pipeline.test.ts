import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createPipeline } from '../../src/engine/pipeline.js';
import { loadAircraftFile } from '../../src/cli/load.js';
import type { LimitEvent } from '../../src/core/events.js';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { openRecorder } from '../../src/recording/recorder.js';
import { createMemorySource } from '../../src/sources/memory.js';
import { frameLine } from '../helpers/frames.js';

const aircraft = loadAircraftFile(join(import.meta.dirname, '..', 'fixtures', 'example-airframe.json'));
const dir = mkdtempSync(join(tmpdir(), 'tm-pipe-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const T0 = Date.UTC(2026, 0, 1, 12, 0, 0);

function setup(recordName?: string) {
  let now = T0;
  const clock = (): number => now;
  const source = createMemorySource('memory link', clock);
  const records: MarginRecord[] = [];
  const rejected: string[] = [];
  const log: string[] = [];
  const recorder = recordName
    ? openRecorder({ path: join(dir, recordName), sourceLabel: source.label, clock })
    : undefined;
  const pipeline = createPipeline({
    source,
    aircraft,
    clock,
    ...(recorder ? { recorder } : {}),
    sinks: {
      record: (rec) => {
        records.push(rec);
        log.push(`rec ${rec.t_s}`);
      },
      rejected: (_l, where, reason) => rejected.push(`${where}: ${reason}`),
      eventStarted: (ev: LimitEvent) => log.push(`start ${ev.limit} ${ev.level} ${ev.start_s}`),
      eventEnded: (ev: LimitEvent) => log.push(`end ${ev.limit} ${ev.level} ${ev.end_s}`),
    },
  });
  pipeline.start();
  return { source, pipeline, records, rejected, log, tick: (ms: number) => (now += ms) };
}

describe('live pipeline (memory source)', () => {
  it('prints a margin record per accepted frame computed at the frame TAS, density and mass', () => {
    const p = setup();
    p.source.emitData(frameLine({ t_s: 0, tas_mps: 22, alt_m: 100, bank_deg: 0 }) + '\n');
    expect(p.records).toHaveLength(1);
    const rec = p.records[0]!;
    expect(rec.t_s).toBe(0);
    expect(rec.tas_mps).toBe(22);
    // ISA at 100 m: 1.2133 kg/m³ (U.S. Standard Atmosphere 1976 table, 100 m geopotential).
    expect(rec.density_kg_m3).toBeCloseTo(1.2133, 4);
    // n_stall = q·S·CLmax/W (issue 2) = ½·1.21328·22²·0.55·1.2 / (3.2·9.80665) = 6.175
    expect(rec.n_stall).toBeCloseTo((0.5 * rec.density_kg_m3 * 22 * 22 * 0.55 * 1.2) / (3.2 * 9.80665), 9);
    expect(rec.n_structural).toBe(3.8);
  });

  it('names each rejected line by its number and receive time', () => {
    const p = setup();
    p.source.emitData('garbage\n');
    p.tick(1500);
    p.source.emitData(frameLine({ t_s: 0, tas_mps: -1 }) + '\n');
    expect(p.rejected).toEqual([
      'line 1 at 2026-01-01T12:00:00.000Z: invalid JSON',
      'line 2 at 2026-01-01T12:00:01.500Z: tas_mps must be a finite number ≥ 0 (got -1)',
    ]);
    const h = p.pipeline.health();
    expect(h.rejected).toBe(2);
    expect(h.lines).toBe(2);
  });

  it('restarts the time check after a reconnect, and delivers a partial line received before the loss', () => {
    const p = setup('reconnect.tmrec');
    p.source.emitData(frameLine({ t_s: 100 }) + '\n' + '{"t_s":100.1,"tas');
    p.source.emitStatus('lost', 'port disappeared');
    p.source.emitStatus('open');
    p.source.emitData(frameLine({ t_s: 1 }) + '\n');
    expect(p.records.map((r) => r.t_s)).toEqual([100, 1]);
    expect(p.rejected).toEqual(['line 2 at 2026-01-01T12:00:00.000Z: invalid JSON (truncated line?)']);
    expect(p.pipeline.health().reconnects).toBe(1);
    return p.pipeline.stop().then(() => {
      const text = readFileSync(join(dir, 'reconnect.tmrec'), 'utf8');
      expect(text).toContain(`${T0}\t{"t_s":100.1,"tas\n`);
      expect(text).toContain(`#link ${T0} lost port disappeared\n`);
    });
  });

  it('closes open limit events at a clock restart', async () => {
    const p = setup();
    // 70° bank at 20 m/s: n = 1/cos 70° = 2.92 exceeds n_thrust (2.41 for this airframe at this speed) → thrust caution.
    const turn = (t: number): string => frameLine({ t_s: t, tas_mps: 20, bank_deg: 70 }) + '\n';
    p.source.emitData(turn(50) + turn(50.1));
    expect(p.log).toContain('start thrust caution 50');
    // Sender clock restarts: 4 rejected, the 5th starts a new segment.
    p.source.emitData([0, 0.1, 0.2, 0.3, 0.4].map(turn).join(''));
    const endAt = p.log.indexOf('end thrust caution 50.1');
    expect(endAt).toBeGreaterThan(0);
    expect(p.log[endAt + 1]).toBe('rec 0.4');
    expect(p.log).toContain('start thrust caution 0.4');
    expect(p.pipeline.health().clockRestarts).toBe(1);
    const all = await p.pipeline.stop();
    expect(all.filter((e) => e.limit === 'thrust' && e.level === 'caution').map((e) => [e.start_s, e.end_s])).toEqual([
      [50, 50.1],
      [0.4, 0.4],
    ]);
  });
});
