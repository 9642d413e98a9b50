import { describe, expect, it } from 'vitest';
import { LIMITS, alertStep, alertThreshold, isAlertOn, levelOfAlerts, updateAlerts } from '../../src/core/alerts.js';
import type { ActiveAlert } from '../../src/core/margin-record.js';
import { DEFAULT_THRESHOLDS, describeDefaultThresholds } from '../../src/core/thresholds.js';

// Thresholds: common practice, not from a standard (issue text): stall 0.80/0.90, structure 0.80/0.95,
// thrust 1.00, speed 0.95/1.00 (CAS ÷ vne), hysteresis 0.02, clear stretch 0.5 s. Caution/warning meaning per
// 14 CFR 25.1322: a warning asks for immediate response, a caution for subsequent response — so a warning is
// always also a caution.

const util = (
  tS: number,
  stall: number | null,
  structure: number | null = 0.3,
  thrust: number | null = 0.5,
  speed: number | null = null,
) => ({
  utilization: { stall, structure, thrust, speed },
  nThrust: 2,
  flying: true,
  tS,
});

/** Feed stall utilizations at `rateHz` from t = 0; returns the alert set after each frame. */
function run(stall: readonly number[], rateHz: number, start: ActiveAlert[] = []): ActiveAlert[][] {
  let alerts = start;
  return stall.map((u, i) => (alerts = updateAlerts(alerts, util(i / rateHz, u), DEFAULT_THRESHOLDS)));
}

describe('one alert with hysteresis', () => {
  it('comes on at exactly the threshold', () => {
    expect(isAlertOn(false, 0.8, 0.8, 0.02)).toBe(true);
    expect(isAlertOn(false, 0.7999, 0.8, 0.02)).toBe(false);
  });

  it('stays on down to threshold − hysteresis and goes off only below it', () => {
    expect(isAlertOn(true, 0.79, 0.8, 0.02)).toBe(true);
    expect(isAlertOn(true, 0.78, 0.8, 0.02)).toBe(true);
    expect(isAlertOn(true, 0.7799, 0.8, 0.02)).toBe(false);
  });

  it('goes off when the utilization is undefined', () => {
    expect(isAlertOn(true, null, 0.8, 0.02)).toBe(false);
  });
});

describe('the clear stretch of one alert', () => {
  it('comes on at once, with no delay', () => {
    expect(alertStep(undefined, 'stall', 'caution', true, true, 3, 0.5)).toEqual({ limit: 'stall', level: 'caution' });
    expect(alertStep(undefined, 'stall', 'caution', false, true, 3, 0.5)).toBeNull();
  });

  it('records the first frame of the clear stretch and goes off once the stretch lasts clear_s', () => {
    const on = { limit: 'stall', level: 'caution' } as const;
    const s1 = alertStep(on, 'stall', 'caution', false, false, 10, 0.5);
    expect(s1).toEqual({ ...on, clear_since_s: 10 });
    const s2 = alertStep(s1!, 'stall', 'caution', false, false, 10.49, 0.5);
    expect(s2).toEqual({ ...on, clear_since_s: 10 });
    expect(alertStep(s2!, 'stall', 'caution', false, false, 10.5, 0.5)).toBeNull();
  });

  it('restarts the stretch when the utilization rises to threshold − hysteresis inside it', () => {
    const inStretch = { limit: 'stall', level: 'caution', clear_since_s: 10 } as const;
    expect(alertStep(inStretch, 'stall', 'caution', false, true, 10.3, 0.5)).toEqual({
      limit: 'stall',
      level: 'caution',
    });
  });

  it('with clear_s 0 goes off at the first frame below threshold − hysteresis (plain hysteresis)', () => {
    const on = { limit: 'stall', level: 'caution' } as const;
    expect(alertStep(on, 'stall', 'caution', false, false, 10, 0)).toBeNull();
  });
});

describe('the alert set of a frame', () => {
  it('knows the thresholds of every alert (thrust has a caution only)', () => {
    expect(alertThreshold('stall', 'caution', DEFAULT_THRESHOLDS)).toBe(0.8);
    expect(alertThreshold('stall', 'warning', DEFAULT_THRESHOLDS)).toBe(0.9);
    expect(alertThreshold('structure', 'caution', DEFAULT_THRESHOLDS)).toBe(0.8);
    expect(alertThreshold('structure', 'warning', DEFAULT_THRESHOLDS)).toBe(0.95);
    expect(alertThreshold('thrust', 'caution', DEFAULT_THRESHOLDS)).toBe(1.0);
    expect(alertThreshold('thrust', 'warning', DEFAULT_THRESHOLDS)).toBeNull();
    expect(alertThreshold('speed', 'caution', DEFAULT_THRESHOLDS)).toBe(0.95);
    expect(alertThreshold('speed', 'warning', DEFAULT_THRESHOLDS)).toBe(1.0);
    expect(DEFAULT_THRESHOLDS.clearS).toBe(0.5);
  });

  it('lists the limits once, in one order', () => {
    expect(LIMITS).toEqual(['stall', 'structure', 'thrust', 'speed']);
  });

  it('describes the defaults for help texts from the constants', () => {
    expect(describeDefaultThresholds()).toBe(
      '0.80/0.90 stall, 0.80/0.95 structure, 1.00 thrust, 0.95/1.00 speed (CAS ÷ vne), hysteresis 0.02, clear 0.5 s',
    );
  });

  it('a value dithering ±0.03 around the caution threshold at 50 Hz keeps one alert on, never flickering', () => {
    const states = run(
      Array.from({ length: 200 }, (_, i) => (i % 2 === 0 ? 0.81 : 0.77)),
      50,
    );
    expect(states.every((s) => s.length === 1 && s[0]!.limit === 'stall' && s[0]!.level === 'caution')).toBe(true);
  });

  it('goes off 0.5 s after the utilization fell below threshold − hysteresis, whatever the rate', () => {
    for (const rateHz of [10, 50, 1000]) {
      // 1 s at 0.85 (caution on), then 1 s at 0.7.
      const n = rateHz;
      const states = run([...Array<number>(n).fill(0.85), ...Array<number>(n).fill(0.7)], rateHz);
      const firstOff = states.findIndex((s, i) => i >= n && s.length === 0);
      // The stretch starts at frame n (t = 1 s) and ends at the first frame with t − 1 ≥ 0.5.
      expect(firstOff / rateHz).toBeCloseTo(1.5, 9);
      expect(states[firstOff - 1]![0]!.clear_since_s).toBeCloseTo(1, 9);
    }
  });

  it('keeps the caution on whenever the warning is on (warning ≥ caution thresholds)', () => {
    const states = run([0.5, 0.85, 0.91, 0.89, 0.885, 0.87, 0.79, 0.7, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5], 10);
    for (const alerts of states) {
      const warning = alerts.some((a) => a.level === 'warning');
      const caution = alerts.some((a) => a.level === 'caution');
      if (warning) expect(caution).toBe(true);
    }
    expect(states[states.length - 1]).toEqual([]);
  });

  it('turns a stall warning on at 0.90, holds it down to 0.88 and starts its clear stretch below', () => {
    let alerts = updateAlerts([], util(0, 0.9), DEFAULT_THRESHOLDS);
    expect(levelOfAlerts(alerts)).toBe('warning');
    alerts = updateAlerts(alerts, util(0.1, 0.881), DEFAULT_THRESHOLDS);
    expect(alerts).toEqual([
      { limit: 'stall', level: 'warning' },
      { limit: 'stall', level: 'caution' },
    ]);
    alerts = updateAlerts(alerts, util(0.2, 0.879), DEFAULT_THRESHOLDS);
    expect(alerts).toEqual([
      { limit: 'stall', level: 'warning', clear_since_s: 0.2 },
      { limit: 'stall', level: 'caution' },
    ]);
    alerts = updateAlerts(alerts, util(0.7, 0.879), DEFAULT_THRESHOLDS);
    expect(alerts).toEqual([{ limit: 'stall', level: 'caution' }]);
  });

  it('raises the thrust caution when n_thrust is 0 even without a utilization', () => {
    const alerts = updateAlerts(
      [],
      { utilization: { stall: 0.3, structure: 0.2, thrust: null, speed: null }, nThrust: 0, flying: true, tS: 0 },
      DEFAULT_THRESHOLDS,
    );
    expect(alerts).toEqual([{ limit: 'thrust', level: 'caution' }]);
  });

  it('raises no new alert when not flying; one already on clears after its stretch', () => {
    expect(updateAlerts([], { ...util(0, 0.95), flying: false }, DEFAULT_THRESHOLDS)).toEqual([]);
    let alerts = updateAlerts(
      [{ limit: 'stall', level: 'caution' }],
      { ...util(1, 0.95), flying: false },
      {
        ...DEFAULT_THRESHOLDS,
      },
    );
    expect(alerts).toEqual([{ limit: 'stall', level: 'caution', clear_since_s: 1 }]);
    alerts = updateAlerts(alerts, { ...util(1.5, 0.95), flying: false }, DEFAULT_THRESHOLDS);
    expect(alerts).toEqual([]);
  });

  it('raises the speed caution at CAS/vne 0.95 and the warning at 1.00', () => {
    expect(updateAlerts([], util(0, 0.3, 0.3, 0.5, 0.949), DEFAULT_THRESHOLDS)).toEqual([]);
    expect(updateAlerts([], util(0, 0.3, 0.3, 0.5, 0.95), DEFAULT_THRESHOLDS)).toEqual([
      { limit: 'speed', level: 'caution' },
    ]);
    expect(updateAlerts([], util(0, 0.3, 0.3, 0.5, 1.0), DEFAULT_THRESHOLDS)).toEqual([
      { limit: 'speed', level: 'warning' },
      { limit: 'speed', level: 'caution' },
    ]);
  });

  it('lists several limits, warnings first', () => {
    const alerts = updateAlerts([], util(0, 0.92, 0.96, 1.1, 1.01), DEFAULT_THRESHOLDS);
    expect(alerts).toEqual([
      { limit: 'stall', level: 'warning' },
      { limit: 'structure', level: 'warning' },
      { limit: 'speed', level: 'warning' },
      { limit: 'stall', level: 'caution' },
      { limit: 'structure', level: 'caution' },
      { limit: 'thrust', level: 'caution' },
      { limit: 'speed', level: 'caution' },
    ]);
    expect(levelOfAlerts([])).toBe('normal');
  });
});
