/**
 * The shortcuts taken per frame for speed must not change a single value: the air state reused while altitude and
 * OAT repeat, and the decimator's skip of items it would not keep.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createDecimator } from '../../src/core/decimate.js';
import type { Frame } from '../../src/core/frame.js';
import { computeMarginRecord, initialMarginState, resolveMarginOptions } from '../../src/core/margins.js';
import { exampleAirframe } from '../helpers/airframes.js';

const frameArb = fc.record({
  dtS: fc.constantFrom(0.02, 0.1, 1.5),
  kind: fc.constantFrom('tas', 'cas', 'ias'),
  airspeedMps: fc.double({ min: 0, max: 40, noNaN: true }),
  altM: fc.constantFrom(-0, 0, 100, 100.1, 12_000),
  oatC: fc.constantFrom(undefined, -0, 0, 15),
  bankDeg: fc.option(fc.double({ min: -80, max: 80, noNaN: true }), { nil: undefined }),
  nz: fc.double({ min: -3, max: 5, noNaN: true }),
});

describe('per-frame shortcuts', () => {
  it('records are the same when the air state of the previous frame is reused (property)', () => {
    const aircraft = exampleAirframe();
    const options = resolveMarginOptions(aircraft);
    fc.assert(
      fc.property(fc.array(frameArb, { minLength: 1, maxLength: 40 }), (parts) => {
        let tS = 0;
        let withReuse = initialMarginState();
        let fresh = initialMarginState();
        for (const p of parts) {
          tS += p.dtS;
          const f: Frame = {
            tS,
            airspeedKind: p.kind as Frame['airspeedKind'],
            airspeedMps: p.airspeedMps,
            altM: p.altM,
            nz: p.nz,
          };
          if (p.oatC !== undefined) f.oatC = p.oatC;
          if (p.bankDeg !== undefined) f.bankDeg = p.bankDeg;
          const a = computeMarginRecord(aircraft, options, withReuse, f);
          // The same step from a state without the remembered air state computes it afresh.
          const b = computeMarginRecord(aircraft, options, { ...fresh, air: undefined }, f);
          expect(a.record).toEqual(b.record);
          expect(Object.is(a.record.density_kg_m3, b.record.density_kg_m3)).toBe(true);
          withReuse = a.state;
          fresh = b.state;
        }
      }),
      { numRuns: 300 },
    );
  });

  it('a decimator fed through keepsNext/skip keeps the same sample as one fed every item', () => {
    for (const count of [0, 1, 7, 100, 5000]) {
      const all = createDecimator<number>(16);
      const lazy = createDecimator<number>(16);
      for (let i = 0; i < count; i++) {
        all.push(i);
        if (lazy.keepsNext()) lazy.push(i);
        else lazy.skip();
      }
      expect(lazy.items()).toEqual(all.items());
      expect(lazy.seen()).toBe(all.seen());
    }
    const d = createDecimator<number>(4);
    expect(() => d.skip()).toThrow(RangeError);
  });
});
