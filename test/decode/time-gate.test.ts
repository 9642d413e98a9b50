import { describe, expect, it } from 'vitest';
import { createTimeGate, RESTART_RUN } from '../../src/decode/time-gate.js';

function run(times: number[]): string[] {
  const gate = createTimeGate();
  return times.map((t) => {
    const r = gate.check(t);
    return r.ok ? (r.newSegment ? 'new' : 'ok') : 'rej';
  });
}

describe('time gate', () => {
  it('accepts increasing times and rejects an equal or earlier one', () => {
    expect(run([0, 0.1, 0.1, 0.05, 0.2])).toEqual(['ok', 'ok', 'rej', 'rej', 'ok']);
  });

  it('rejects a lone stray frame behind the last time and keeps the stream going', () => {
    expect(run([10, 10.1, 3, 10.2, 10.3])).toEqual(['ok', 'ok', 'rej', 'ok', 'ok']);
  });

  it('takes 5 consecutive increasing frames behind the last time as a clock restart, accepted from the 5th on', () => {
    expect(RESTART_RUN).toBe(5);
    expect(run([100, 100.1, 0, 0.1, 0.2, 0.3, 0.4, 0.5])).toEqual([
      'ok',
      'ok',
      'rej',
      'rej',
      'rej',
      'rej',
      'new',
      'ok',
    ]);
  });

  it('does not count a run that stops increasing', () => {
    expect(run([100, 0, 0.1, 0.05, 0.1, 0.2, 0.3])).toEqual(['ok', 'rej', 'rej', 'rej', 'rej', 'rej', 'rej']);
    expect(run([100, 0, 0.1, 0.05, 0.1, 0.2, 0.3, 0.4])).toEqual([
      'ok',
      'rej',
      'rej',
      'rej',
      'rej',
      'rej',
      'rej',
      'new',
    ]);
  });

  it('breaks a restart run when an in-order frame arrives in between', () => {
    expect(run([100, 0, 0.1, 0.2, 100.1, 0.3, 0.4])).toEqual(['ok', 'rej', 'rej', 'rej', 'ok', 'rej', 'rej']);
  });

  it('starts afresh after reset (a reconnect)', () => {
    const gate = createTimeGate();
    expect(gate.check(50).ok).toBe(true);
    gate.reset();
    expect(gate.check(1)).toEqual({ ok: true, newSegment: false });
  });
});
