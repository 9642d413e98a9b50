import { describe, expect, it } from 'vitest';
import { alertThreshold, isAlertOn, levelOfAlerts, updateAlerts } from '../../src/core/alerts.js';
import type { ActiveAlert } from '../../src/core/margin-record.js';
import { DEFAULT_THRESHOLDS } from '../../src/core/thresholds.js';

// Thresholds: common practice, not from a standard (issue text): stall 0.80/0.90, structure 0.80/0.95,
// thrust 1.00, hysteresis 0.02. Caution/warning meaning per 14 CFR 25.1322: a warning asks for immediate
// response, a caution for subsequent response — so a warning is always also a caution.

const util = (stall: number | null, structure: number | null = 0.3, thrust: number | null = 0.5) => ({
  utilization: { stall, structure, thrust },
  nThrust: 2,
  flying: true,
});

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

describe('the alert set of a frame', () => {
  it('knows the thresholds of every alert (thrust has a caution only)', () => {
    expect(alertThreshold('stall', 'caution', DEFAULT_THRESHOLDS)).toBe(0.8);
    expect(alertThreshold('stall', 'warning', DEFAULT_THRESHOLDS)).toBe(0.9);
    expect(alertThreshold('structure', 'caution', DEFAULT_THRESHOLDS)).toBe(0.8);
    expect(alertThreshold('structure', 'warning', DEFAULT_THRESHOLDS)).toBe(0.95);
    expect(alertThreshold('thrust', 'caution', DEFAULT_THRESHOLDS)).toBe(1.0);
    expect(alertThreshold('thrust', 'warning', DEFAULT_THRESHOLDS)).toBeNull();
  });

  it('a value dithering ±0.01 around the caution threshold keeps one alert on, never flickering', () => {
    let alerts: ActiveAlert[] = [];
    const states: boolean[] = [];
    for (let i = 0; i < 50; i++) {
      alerts = updateAlerts(alerts, util(i % 2 === 0 ? 0.81 : 0.79), DEFAULT_THRESHOLDS);
      states.push(alerts.length > 0);
    }
    expect(states.every((s) => s)).toBe(true);
    expect(levelOfAlerts(alerts)).toBe('caution');
    // and it goes off once below 0.78
    expect(updateAlerts(alerts, util(0.775), DEFAULT_THRESHOLDS)).toEqual([]);
  });

  it('keeps the caution on whenever the warning is on (warning ≥ caution thresholds)', () => {
    let alerts: ActiveAlert[] = [];
    for (const u of [0.5, 0.85, 0.91, 0.89, 0.885, 0.87, 0.79, 0.7]) {
      alerts = updateAlerts(alerts, util(u), DEFAULT_THRESHOLDS);
      const warning = alerts.some((a) => a.level === 'warning');
      const caution = alerts.some((a) => a.level === 'caution');
      if (warning) expect(caution).toBe(true);
    }
  });

  it('turns a stall warning on at 0.90 and off below 0.88', () => {
    let alerts = updateAlerts([], util(0.9), DEFAULT_THRESHOLDS);
    expect(levelOfAlerts(alerts)).toBe('warning');
    alerts = updateAlerts(alerts, util(0.881), DEFAULT_THRESHOLDS);
    expect(levelOfAlerts(alerts)).toBe('warning');
    alerts = updateAlerts(alerts, util(0.879), DEFAULT_THRESHOLDS);
    expect(alerts).toEqual([{ limit: 'stall', level: 'caution' }]);
  });

  it('raises the thrust caution when n_thrust is 0 even without a utilization', () => {
    const alerts = updateAlerts(
      [],
      { utilization: { stall: 0.3, structure: 0.2, thrust: null }, nThrust: 0, flying: true },
      DEFAULT_THRESHOLDS,
    );
    expect(alerts).toEqual([{ limit: 'thrust', level: 'caution' }]);
  });

  it('raises nothing when not flying', () => {
    const alerts = updateAlerts(
      [{ limit: 'stall', level: 'caution' }],
      { ...util(0.95), flying: false },
      DEFAULT_THRESHOLDS,
    );
    expect(alerts).toEqual([]);
  });

  it('lists several limits, warnings first', () => {
    const alerts = updateAlerts([], util(0.92, 0.96, 1.1), DEFAULT_THRESHOLDS);
    expect(alerts).toEqual([
      { limit: 'stall', level: 'warning' },
      { limit: 'structure', level: 'warning' },
      { limit: 'stall', level: 'caution' },
      { limit: 'structure', level: 'caution' },
      { limit: 'thrust', level: 'caution' },
    ]);
    expect(levelOfAlerts([])).toBe('normal');
  });
});
