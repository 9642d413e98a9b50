import { describe, expect, it } from 'vitest';
import { DEFAULT_THRESHOLDS, resolveThresholds, ThresholdsSchema } from '../../src/core/thresholds.js';

// Defaults: common practice, not a standard (speed caution at 0.95·vne and warning at vne; 0.5 s clear stretch).
describe('alert thresholds', () => {
  it('reads speed_caution, speed_warning and clear_s over the defaults', () => {
    const json = ThresholdsSchema.parse({ speed_caution: 0.9, clear_s: 1.2 });
    const t = resolveThresholds(json);
    expect(t.speedCaution).toBe(0.9);
    expect(t.speedWarning).toBe(DEFAULT_THRESHOLDS.speedWarning);
    expect(t.clearS).toBe(1.2);
    expect(resolveThresholds(undefined).clearS).toBe(0.5);
  });

  it('refuses a negative or too long clear_s and a speed warning below its caution, saying what was expected', () => {
    const bad = ThresholdsSchema.safeParse({ clear_s: -1 });
    expect(bad.success).toBe(false);
    expect(bad.error!.issues[0]!.message).toBe('must be a number of seconds from 0 to 10');
    expect(ThresholdsSchema.safeParse({ clear_s: 11 }).success).toBe(false);
    const order = ThresholdsSchema.safeParse({ speed_caution: 1.0, speed_warning: 0.9 });
    expect(order.success).toBe(false);
    expect(order.error!.issues[0]!.path).toEqual(['speed_warning']);
    expect(order.error!.issues[0]!.message).toBe('must not be below the caution threshold');
  });
});
