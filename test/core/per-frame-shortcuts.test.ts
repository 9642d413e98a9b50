/**
 * The shortcuts taken per frame for speed must not change a single value: the air state reused while altitude and
 * OAT repeat, the filter gain and the thrust's density factor reused while Δt and density repeat, the one reused
 * frame of the packed batches, and the decimator's skip of items it would not keep.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { computeAirState } from '../../src/core/atmosphere.js';
import { createDecimator } from '../../src/core/decimate.js';
import { lowPassStep } from '../../src/core/filter.js';
import { thrustAvailableN } from '../../src/core/performance.js';
import { createFrameUnpacker, FRAME_SLOTS, packFrame, unpackFrame } from '../../src/decode/frame-batch.js';
import type { Frame } from '../../src/core/frame.js';
import {
  computeMarginRecord,
  initialMarginState,
  marginRecordOf,
  resolveMarginOptions,
} from '../../src/core/margins.js';
import { createFrameEngine } from '../../src/core/frame-engine.js';
import { marginValuesOf } from '../../src/core/margin-values.js';
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
          const b = computeMarginRecord(aircraft, options, { ...fresh, air: initialMarginState().air }, f);
          expect(a.record).toEqual(b.record);
          expect(Object.is(a.record.density_kg_m3, b.record.density_kg_m3)).toBe(true);
          withReuse = a.state;
          fresh = b.state;
        }
      }),
      { numRuns: 300 },
    );
  });

  it('the air state of the same altitude and temperature is the same whether the call before had other inputs', () => {
    const inputs: Array<[number, { oatC?: number; isaDeviationK?: number }]> = [
      [100, {}],
      [100, { oatC: 15 }],
      [100, { isaDeviationK: 10 }],
      [-0, {}],
      [0, {}],
      [100.1, {}],
      [12_000, { oatC: -0 }],
      [12_000, { oatC: 0 }],
    ];
    // Each state computed after a different call (nothing to reuse) and again right after itself (reused).
    const afterOther = inputs.map(([alt, t], i) => {
      const [otherAlt, otherT] = inputs[(i + 1) % inputs.length]!;
      computeAirState(otherAlt, otherT);
      return { ...computeAirState(alt, t) };
    });
    inputs.forEach(([alt, t], i) => {
      const again = computeAirState(alt, t);
      expect(again).toEqual(afterOther[i]);
      for (const key of Object.keys(again) as Array<keyof typeof again>)
        expect(Object.is(again[key], afterOther[i]![key])).toBe(true);
    });
    // A deviation and an OAT are different inputs even where they give the same temperature.
    expect(computeAirState(0, { isaDeviationK: 0 }).temperatureK).toBe(computeAirState(0, {}).temperatureK);
    expect(computeAirState(0, { oatC: 30 }).temperatureK).not.toBe(
      computeAirState(0, { isaDeviationK: 0 }).temperatureK,
    );
  });

  it("the engine's values and the record made from them agree, and advance then record() equals push (property)", () => {
    const aircraft = exampleAirframe({ vne_mps: 35, cl_min: -0.8 });
    fc.assert(
      fc.property(fc.array(frameArb, { minLength: 1, maxLength: 40 }), (parts) => {
        const pushed = createFrameEngine(aircraft);
        const advanced = createFrameEngine(aircraft);
        let tS = 0;
        for (const p of parts) {
          tS += p.dtS;
          const f: Frame = {
            tS,
            airspeedKind: p.kind as Frame['airspeedKind'],
            airspeedMps: p.airspeedMps,
            altM: p.altM,
          };
          if (p.oatC !== undefined) f.oatC = p.oatC;
          if (p.bankDeg !== undefined) f.bankDeg = p.bankDeg;
          else f.nz = p.nz;
          const rec = pushed.push(f);
          const took = advanced.advance(f);
          expect(took).toBe(rec !== null);
          if (rec === null) continue;
          expect(advanced.record()).toEqual(rec);
          // The values read back from the record are the engine's values: one reading of each key.
          expect(marginValuesOf(rec)).toEqual(advanced.values);
          expect(marginRecordOf(aircraft, advanced.options, marginValuesOf(rec))).toEqual(rec);
        }
      }),
      { numRuns: 200 },
    );
  });

  it('a filter step gives the same value whether the step before had the same Δt and τ or another', () => {
    const steps: Array<[number, number]> = [
      [0.02, 0.15],
      [0.02, 0.15],
      [0.5, 0.15],
      [0.02, 0.3],
      [0.02, 0.15],
    ];
    const previous = { tS: 10, value: 1 };
    const results = steps.map(([dt, tau]) => lowPassStep(previous, 10 + dt, 3, tau).state.value);
    // Each step again after a step with other Δt and τ.
    steps.forEach(([dt, tau], i) => {
      lowPassStep(previous, 10 + 0.7, 3, 0.9);
      expect(Object.is(lowPassStep(previous, 10 + dt, 3, tau).state.value, results[i])).toBe(true);
    });
    expect(results[0]).toBe(results[1]);
    expect(results[2]).not.toBe(results[0]);
  });

  it('the thrust at a density is the same whether the call before was at another density', () => {
    const thrust = exampleAirframe().thrust;
    const densities = [1.225, 1.225, 1.0, 0.9, 1.225];
    const first = densities.map((rho) => thrustAvailableN(thrust, 20, rho));
    densities.forEach((rho, i) => {
      thrustAvailableN(thrust, 20, 0.5);
      expect(thrustAvailableN(thrust, 20, rho)).toBe(first[i]);
    });
    expect(first[2]).not.toBe(first[0]);
  });

  it('the reused frame of createFrameUnpacker holds the same frame as unpackFrame, absent keys absent', () => {
    const frames: Frame[] = [
      { tS: 1.5, airspeedKind: 'tas', airspeedMps: 20, altM: -0, bankDeg: 30, nz: 1.2, oatC: 10, massKg: 3 },
      { tS: 2, airspeedKind: 'cas', airspeedMps: 0, altM: 100, nz: 1 },
      { tS: 3, airspeedKind: 'ias', airspeedMps: 12.25, altM: 100, bankDeg: -10, simulated: true, throttle: 0.5 },
    ];
    const packed = new Float64Array(frames.length * FRAME_SLOTS);
    frames.forEach((f, i) => packFrame(packed, i, f, false));
    const unpack = createFrameUnpacker();
    const reused = unpack(packed, 0);
    frames.forEach((f, i) => {
      const frame = unpack(packed, i);
      expect(frame).toBe(reused);
      // toEqual takes a key set to undefined as absent: the engine reads absent keys as undefined.
      expect(frame).toEqual(unpackFrame(packed, i));
      expect(frame).toEqual(f);
      expect(Object.is(frame.altM, f.altM)).toBe(true);
      for (const key of Object.keys(frame) as Array<keyof Frame>) if (!(key in f)) expect(frame[key]).toBeUndefined();
    });
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
