import { describe, expect, it } from 'vitest';
import { createMarginTracker } from '../../src/core/margins.js';
import { exampleAirframe } from '../helpers/airframes.js';

describe('the simulated flag', () => {
  it('is carried from a frame that says "simulated": true to its margin record, and absent otherwise', () => {
    const tracker = createMarginTracker(exampleAirframe());
    const base = { tS: 0, airspeedKind: 'tas' as const, airspeedMps: 20, altM: 100, bankDeg: 30 };
    expect(tracker.push({ ...base, simulated: true }).simulated).toBe(true);
    expect('simulated' in tracker.push({ ...base, tS: 0.1 })).toBe(false);
    expect('simulated' in tracker.push({ ...base, tS: 0.2, simulated: false })).toBe(false);
  });
});
