import { describe, expect, it } from 'vitest';
import { parseAircraft, type Aircraft } from '../../src/core/aircraft.js';
import {
  computeFit,
  createFitCollector,
  createHeldMaximum,
  fittedAircraft,
  thinSamples,
  type FitFrame,
  type FitSample,
} from '../../src/core/fit.js';
import { analyseFit, fittedAirframeJson, type FitData } from '../../src/core/fit-run.js';
import { lowPassRampDelayS, lowPassStep, type LowPassState } from '../../src/core/filter.js';
import { thrustAvailableN } from '../../src/core/performance.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { exampleAirframeJson } from '../helpers/airframes.js';

const aircraft: Aircraft = (() => {
  const r = parseAircraft(exampleAirframeJson(), 'example');
  if (!r.ok) throw new Error('example airframe');
  return r.value;
})();

/**
 * Frames of steady flight made from the energy relation Ps = V·(T − D)/W (the energy method; Rutowski 1954 — from
 * memory) with a known polar and thrust: a glide has T = 0, a full-throttle frame T = scale·T_model.
 */
function steadySamples(opts: {
  regime: 'idle' | 'full';
  speeds: number[];
  loadFactor?: number;
  cd0: number;
  k: number;
  thrustScale?: number;
  seconds?: number;
  rateHz?: number;
  aircraft?: Aircraft;
}): FitSample[] {
  const ac = opts.aircraft ?? aircraft;
  const rho = 1.2;
  const mass = aircraft.massKg;
  const out: FitSample[] = [];
  opts.speeds.forEach((v, i) => {
    const n = opts.loadFactor ?? 1;
    const qS = 0.5 * rho * v * v * aircraft.wingAreaM2;
    const cl = (n * mass * G0_MPS2) / qS;
    const drag = qS * (opts.cd0 + opts.k * cl * cl);
    const thrust = opts.regime === 'idle' ? 0 : (opts.thrustScale ?? 1) * thrustAvailableN(ac.thrust, v, rho)!;
    const ps = (v * (thrust - drag)) / (mass * G0_MPS2);
    const frames = (opts.seconds ?? 20) * (opts.rateHz ?? 10);
    for (let f = 0; f < frames; f++) {
      out.push({
        flight: 0,
        stretch: i,
        tS: f / (opts.rateHz ?? 10),
        regime: opts.regime,
        tasMps: v,
        densityKgM3: rho,
        massKg: mass,
        loadFactor: n,
        psMps: ps,
      });
    }
  });
  return out;
}

describe('fit', () => {
  it('keeps one sample per rate window in each stretch and regime', () => {
    const s = steadySamples({ regime: 'idle', speeds: [15, 20], cd0: 0.03, k: 0.05, seconds: 10, rateHz: 50 });
    const thin = thinSamples(s, 1);
    expect(thin).toHaveLength(20); // 10 s at one per second, two stretches
    for (let i = 1; i < 10; i++) expect(thin[i]!.tS - thin[i - 1]!.tS).toBeGreaterThanOrEqual(1);
  });

  it('recovers CD0, k and the thrust scale from noise-free glides and full-throttle turns', () => {
    const truth = { cd0: 0.038, k: 0.058 };
    const speeds = [11, 12.5, 14, 16, 18, 20, 23, 26];
    const samples = [
      ...steadySamples({ regime: 'idle', speeds, ...truth }),
      ...steadySamples({ regime: 'full', speeds: [14, 18, 22], loadFactor: 1.4, ...truth, thrustScale: 0.9 }),
    ];
    const fit = computeFit(aircraft, samples, 1);
    expect(fit.polar).not.toBeNull();
    expect(fit.polar!.cd0.value).toBeCloseTo(truth.cd0, 10);
    expect(fit.polar!.k.value).toBeCloseTo(truth.k, 10);
    expect(fit.polar!.r2).toBeCloseTo(1, 10);
    expect(fit.thrustScale!.scale.value).toBeCloseTo(0.9, 10);
    const fitted = fittedAircraft(aircraft, fit);
    expect(thrustAvailableN(fitted.thrust, 20, 1.225)).toBeCloseTo(
      0.9 * thrustAvailableN(aircraft.thrust, 20, 1.225)!,
      10,
    );
  });

  it('does not estimate the polar from too few idle samples or a narrow CL² range, and says what to fly', () => {
    const few = computeFit(
      aircraft,
      steadySamples({ regime: 'idle', speeds: [15, 20], cd0: 0.03, k: 0.05, seconds: 5 }),
      1,
    );
    expect(few.polar).toBeNull();
    expect(few.polarReason).toMatch(
      /10 independent idle samples.*at least 30.*power-off glides.*at three or more speeds/,
    );
    const narrow = computeFit(aircraft, steadySamples({ regime: 'idle', speeds: [19, 20, 21], cd0: 0.03, k: 0.05 }), 1);
    expect(narrow.polar).toBeNull();
    expect(narrow.polarReason).toMatch(/span CL² .* at least 0\.15/);
  });
});

describe('the highest value held for a time', () => {
  it('is the maximum over windows of the minimum in the window', () => {
    const held = createHeldMaximum(0.5);
    // 10 Hz: 1.0 for 1 s, a 0.3 s spike to 1.4, then 1.2 held for 0.6 s.
    const values = [...Array(10).fill(1.0), 1.4, 1.4, 1.4, ...Array(7).fill(1.2), 0.9, 0.9];
    values.forEach((v, i) => held.push(i / 10, v));
    expect(held.value()).toBe(1.2);
  });

  it('holds nothing shorter than the time, and no hold spans a reset', () => {
    const held = createHeldMaximum(0.5);
    [1, 1, 1, 1].forEach((v, i) => held.push(i / 10, v)); // 0.3 s
    expect(held.value()).toBeNull();
    held.reset();
    [2, 2, 2, 2, 2, 2].forEach((v, i) => held.push(10 + i / 10, v)); // 0.5 s after the reset
    expect(held.value()).toBe(2);
  });
});

/** Frames of steady flight for the collector: 10 Hz from t0 for `seconds`, with the rates given. */
function frames(opts: Partial<FitFrame> & { from: number; seconds: number; rateHz?: number }): FitFrame[] {
  const rateHz = opts.rateHz ?? 10;
  const out: FitFrame[] = [];
  for (let i = 0; i < opts.seconds * rateHz; i++) {
    out.push({
      tS: opts.from + i / rateHz,
      flying: opts.flying ?? true,
      throttle: opts.throttle === undefined ? 0 : opts.throttle,
      bankDeg: opts.bankDeg === undefined ? 0 : opts.bankDeg,
      bankRateDps: opts.bankRateDps === undefined ? 0 : opts.bankRateDps,
      tasMps: opts.tasMps ?? 15,
      loadFactor: opts.loadFactor ?? 1,
      densityKgM3: 1.2,
      massKg: aircraft.massKg,
      cl: opts.cl ?? 0.5,
      dvdtMps2: opts.dvdtMps2 === undefined ? 0 : opts.dvdtMps2,
      dhdtMps: opts.dhdtMps === undefined ? -1 : opts.dhdtMps,
    });
  }
  return out;
}

describe('the fit collector', () => {
  it('counts the frames without throttle and never uses them', () => {
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 5, throttle: null })) c.push(f);
    expect(c.counts()).toEqual({ total: 50, usable: 0, idle: 0, full: 0, withoutThrottle: 50 });
    expect(c.samples()).toEqual([]);
  });

  it('uses idle and full-throttle frames only, not part throttle', () => {
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 3, throttle: 0.02 })) c.push(f);
    for (const f of frames({ from: 3, seconds: 3, throttle: 0.5 })) c.push(f);
    for (const f of frames({ from: 6, seconds: 3, throttle: 0.98 })) c.push(f);
    const n = c.counts();
    expect(n.idle).toBeGreaterThan(0);
    expect(n.full).toBeGreaterThan(0);
    expect(n.usable).toBe(n.idle + n.full);
    expect(n.usable).toBeLessThan(60);
  });

  it('uses a frame only when its whole rate window lies after the last break', () => {
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 3 })) c.push(f);
    const before = c.counts().usable;
    // 0 … 2.9 s: frames from 1.0 s on have a whole window, 20 of them.
    expect(before).toBe(20);
    c.breakData();
    for (const f of frames({ from: 10, seconds: 0.9 })) c.push(f);
    expect(c.counts().usable).toBe(before);
    for (const f of frames({ from: 10.9, seconds: 0.5 })) c.push(f);
    expect(c.counts().usable).toBe(before + 4); // 10.9 … 11.3 s pushed: 11.0 … 11.3 s usable
  });

  it('does not use frames whose bank changes by 10 °/s or more; frames without a bank have none to check', () => {
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 3, bankDeg: 20, bankRateDps: 10 })) c.push(f);
    for (const f of frames({ from: 3, seconds: 3, bankDeg: 20, bankRateDps: null })) c.push(f);
    expect(c.counts().usable).toBe(0);
    for (const f of frames({ from: 6, seconds: 3, bankDeg: 20, bankRateDps: -9.9 })) c.push(f);
    const withBank = c.counts().usable;
    expect(withBank).toBe(30);
    for (const f of frames({ from: 9, seconds: 3, bankDeg: null, bankRateDps: null })) c.push(f);
    expect(c.counts().usable).toBe(withBank + 30);
  });

  it('counts a frame whose window held another throttle or a changing load factor as usable, but takes no sample from it', () => {
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 0.5, throttle: 1 })) c.push(f);
    for (const f of frames({ from: 0.5, seconds: 1.5, throttle: 0 })) c.push(f);
    // 1.0 … 1.9 s are usable; the idle regime began at 0.5 s, so only 1.5 s on has a whole idle window.
    expect(c.counts().idle).toBe(10);
    expect(c.samples().map((s) => s.regime)).toEqual(['idle']);
    expect(c.samples()[0]!.tS).toBeGreaterThanOrEqual(0.5);

    const d = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 1.5, loadFactor: 1 })) d.push(f);
    for (const f of frames({ from: 1.5, seconds: 1.5, loadFactor: 1.15 })) d.push(f);
    expect(d.counts().usable).toBe(20);
    // Samples at 1.0 s, then not before the window has left the step of n (2.1 … 2.4 s spread by 0.15): 2.5 s.
    const delay = lowPassRampDelayS(0.15, 0.1);
    expect(d.samples().map((s) => s.tS - delay + 0.5)).toEqual([
      expect.closeTo(1.0, 9) as unknown as number,
      expect.closeTo(2.5, 9) as unknown as number,
    ]);
  });

  it('takes at most one sample per rate window and regime, so that no two samples share a frame', () => {
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 20, rateHz: 50 })) c.push(f);
    const times = c.samples().map((s) => s.tS);
    expect(times.length).toBeGreaterThanOrEqual(17);
    for (let i = 1; i < times.length; i++) expect(times[i]! - times[i - 1]!).toBeGreaterThan(1);
  });

  it('pairs the rates with the smoothed state at the middle of the rate window, after the smoothing delay', () => {
    // A steady acceleration a from V0: the raw TAS is V0 + a·t, the smoothed TAS trails it by the filter's delay d.
    // A least-squares slope over [t − W, t] is the derivative at the middle of the window, so the sample taken at
    // t pairs a with V at t − W/2, i.e. the smoothed record at t − W/2 + d. The Ps is (V/g0)·a (level flight).
    const rateHz = 50;
    const a = 0.4;
    const d = lowPassRampDelayS(0.15, 1 / rateHz);
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 3, rateHz, throttle: 1, dhdtMps: 0, dvdtMps2: a })) {
      c.push({ ...f, tasMps: 15 + a * (f.tS - d) });
    }
    const sample = c.samples()[0]!;
    const windowEndS = sample.tS + 0.5 - d;
    expect(sample.tasMps).toBeCloseTo(15 + a * (windowEndS - 0.5), 9);
    expect(sample.psMps).toBeCloseTo((sample.tasMps / 9.80665) * a, 12); // g0 of ISO 80000-3 / the CGPM (1901)
  });

  it('keeps the highest CL held for 0.5 s over flying frames of any throttle', () => {
    const c = createFitCollector(1, 0.15);
    for (const f of frames({ from: 0, seconds: 2, throttle: 0.5, cl: 0.8 })) c.push(f);
    for (const f of frames({ from: 2, seconds: 0.3, throttle: 0.5, cl: 1.3 })) c.push(f);
    for (const f of frames({ from: 2.3, seconds: 1, throttle: null, cl: 1.1 })) c.push(f);
    for (const f of frames({ from: 3.3, seconds: 1, flying: false, cl: 1.6 })) c.push(f);
    expect(c.clDemonstrated()).toBe(1.1);
  });
});

describe("the smoothing filter's delay", () => {
  it('is how far the filter trails a ramp, found by running the filter', () => {
    // Independent of the closed form: run lowPassStep on x = t and read the lag after it has settled.
    for (const [tauS, dtS] of [
      [0.15, 0.1],
      [0.15, 0.02],
      [0.5, 0.01],
    ] as const) {
      let state: LowPassState | null = null;
      let t = 0;
      for (let i = 0; i < 2000; i++, t += dtS) state = lowPassStep(state, t, t, tauS).state;
      expect(state!.tS - state!.value).toBeCloseTo(lowPassRampDelayS(tauS, dtS), 9);
    }
    expect(lowPassRampDelayS(0, 0.1)).toBe(0);
    // Tends to τ at fine steps.
    expect(lowPassRampDelayS(0.15, 1e-5)).toBeCloseTo(0.15, 4);
  });
});

function dataOf(samples: FitSample[], counts: Partial<FitData['counts']> = {}): FitData {
  const idle = samples.filter((s) => s.regime === 'idle').length;
  const full = samples.length - idle;
  return {
    counts: { total: samples.length, usable: samples.length, idle, full, withoutThrottle: 0, ...counts },
    samples,
    clDemonstrated: 1.0,
    conditions: [{ altM: 150, isaDeviationK: 0, massKg: aircraft.massKg }],
    residuals: [[]],
  };
}

describe('the fit analysis', () => {
  const truth = { cd0: 0.036, k: 0.055 };
  const glides = () => steadySamples({ regime: 'idle', speeds: [11, 12.5, 14, 16, 18, 20], ...truth });
  const fullThrottle = () =>
    steadySamples({ regime: 'full', speeds: [14, 18, 22], loadFactor: 1.3, ...truth, thrustScale: 0.85 });

  it('refuses data without throttle, saying what is missing and what to fly', () => {
    const r = analyseFit(aircraft, dataOf([], { total: 500, usable: 0, withoutThrottle: 500 }), 1);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.problems.join(' ')).toMatch(/no frame carries "throttle" \(500 accepted frames\)/);
    expect(r.problems.join(' ')).toMatch(/power-off glides .* three or more speeds between 1\.3 and 2 Vs1/);
    expect(r.problems.join(' ')).toMatch(/full-throttle level accelerations/);
  });

  it('refuses data with no usable frame', () => {
    const r = analyseFit(aircraft, dataOf([], { total: 800, usable: 0, withoutThrottle: 0 }), 1);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems[0]).toMatch(/no usable frame among 800 accepted frames.*full throttle.*idle.*glides/);
  });

  it('refuses data flown at a single speed', () => {
    const one = steadySamples({ regime: 'idle', speeds: [15], seconds: 60, ...truth });
    const r = analyseFit(aircraft, dataOf(thinSamples(one, 1)), 1);
    expect(r.ok).toBe(false);
    if (!r.ok)
      expect(r.problems[0]).toMatch(/every usable frame was flown at one speed \(15\.0–15\.0 m\/s TAS\).*glides/);
  });

  it('refuses data from which nothing can be estimated, with both reasons', () => {
    const few = steadySamples({ regime: 'idle', speeds: [12, 18], seconds: 5, ...truth });
    const r = analyseFit(aircraft, dataOf(thinSamples(few, 1)), 1);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.problems.join('\n')).toMatch(/polar: .*at least 30/);
    expect(r.problems.join('\n')).toMatch(/thrust: 0 independent full-throttle samples/);
  });

  it("fits the polar alone from glides, warns that the thrust was not estimated, and keeps the file's thrust", () => {
    const r = analyseFit(aircraft, dataOf(thinSamples(glides(), 1)), 1);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.fit.polar!.cd0.value).toBeCloseTo(truth.cd0, 9);
    expect(r.value.fit.thrustScale).toBeNull();
    expect(r.value.fitted.thrust).toEqual(aircraft.thrust);
    expect(r.value.warnings.join(' ')).toMatch(/thrust scale not estimated/);
  });

  it('uses the fitted polar for the thrust, and the envelope of the fitted airframe', () => {
    const r = analyseFit(aircraft, dataOf(thinSamples([...glides(), ...fullThrottle()], 1)), 1);
    if (!r.ok) throw new Error(r.problems.join());
    expect(r.value.fit.thrustScale!.scale.value).toBeCloseTo(0.85, 9);
    expect(r.value.fit.thrustScale!.polar).toBe('fitted');
    expect(r.value.applied).toEqual({ polar: true, thrustScale: true });
    expect(r.value.envelopeFitted.maxSustainedLoadFactor!.value).toBeLessThan(
      r.value.envelopeFile.maxSustainedLoadFactor!.value,
    );
  });

  it('reports a polar that is not physical but does not apply it', () => {
    // Idle samples whose drag falls with CL: a negative k.
    const bad = steadySamples({ regime: 'idle', speeds: [11, 13, 15, 17, 19, 21], cd0: 0.06, k: -0.02 });
    const r = analyseFit(aircraft, dataOf(thinSamples(bad, 1)), 1);
    if (!r.ok) throw new Error(r.problems.join());
    expect(r.value.fit.polar!.k.value).toBeLessThan(0);
    expect(r.value.applied.polar).toBe(false);
    expect(r.value.fitted.k).toBe(aircraft.k);
    expect(r.value.warnings.join(' ')).toMatch(/not physical/);
    // Nor does the thrust lean on it: with full-throttle samples the scale comes with the file's polar.
    const withThrust = analyseFit(
      aircraft,
      dataOf(
        thinSamples(
          [
            ...bad,
            ...steadySamples({
              regime: 'full',
              speeds: [14, 18, 22],
              cd0: aircraft.cd0,
              k: aircraft.k,
              thrustScale: 0.9,
            }),
          ],
          1,
        ),
      ),
      1,
    );
    if (!withThrust.ok) throw new Error(withThrust.problems.join());
    expect(withThrust.value.fit.thrustScale!.polar).toBe('file');
    expect(withThrust.value.fit.thrustScale!.scale.value).toBeCloseTo(0.9, 9);
  });

  it("warns when the wing held more CL than the file's cl_max, and never raises cl_max", () => {
    const data = { ...dataOf(thinSamples(glides(), 1)), clDemonstrated: aircraft.clMax + 0.1 };
    const r = analyseFit(aircraft, data, 1);
    if (!r.ok) throw new Error(r.problems.join());
    expect(r.value.fitted.clMax).toBe(aircraft.clMax);
    expect(r.value.warnings.join(' ')).toMatch(
      /above the file's cl_max .*the file is conservative, or the data are wrong/,
    );
  });
});

describe('the fitted airframe file', () => {
  const truth = { cd0: 0.036, k: 0.055 };
  const outcome = (ac: Aircraft) => {
    const samples = [
      ...steadySamples({ regime: 'idle', speeds: [11, 12.5, 14, 16, 18, 20], ...truth }),
      ...steadySamples({ regime: 'full', speeds: [14, 16, 18, 20, 22], ...truth, thrustScale: 0.8, aircraft: ac }),
    ];
    const r = analyseFit(ac, dataOf(thinSamples(samples, 1)), 1);
    if (!r.ok) throw new Error(r.problems.join());
    return r.value;
  };

  it('scales power and static thrust, writes the polar as {cd0, k}, and the loader accepts the result without a warning', () => {
    const original = exampleAirframeJson() as unknown as Record<string, unknown>;
    const o = outcome(aircraft);
    const json = fittedAirframeJson(original, o, {
      dataDate: '2026-05-04',
      dataDateFrom: 'recording',
      files: ['a.ndjson'],
      rateWindowS: 1,
    });
    expect(json['polar']).toEqual({ cd0: Number(truth.cd0.toPrecision(6)), k: Number(truth.k.toPrecision(6)) });
    const thrust = json['thrust'] as Record<string, number>;
    expect(thrust['power_w']).toBeCloseTo(200 * 0.8, 3);
    expect(thrust['static_thrust_n']).toBeCloseTo(14 * 0.8, 4);
    expect(thrust['prop_efficiency']).toBe(0.62);
    expect(json['name']).toBe(original['name']);
    const fitted = json['fitted'] as Record<string, unknown>;
    expect(fitted['data_date']).toBe('2026-05-04');
    expect(fitted['files']).toEqual(['a.ndjson']);
    expect((fitted['polar'] as { cd0: { ci95: number[] } }).cd0.ci95).toHaveLength(2);
    expect((fitted['thrust_scale'] as { samples: number }).samples).toBeGreaterThanOrEqual(10);
    const parsed = parseAircraft(JSON.parse(JSON.stringify(json)), 'fitted.json');
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    expect(parsed.warnings).toEqual([]);
    // The file reads back as exactly the fitted airframe the report's envelope used.
    expect(parsed.value.cd0).toBe(o.fitted.cd0);
    expect(parsed.value.k).toBe(o.fitted.k);
    expect(parsed.value.thrust).toEqual(o.fitted.thrust);
  });

  it('scales a constant thrust and every point of a thrust table', () => {
    const constant = { ...exampleAirframeJson(), thrust: { model: 'constant', thrust_n: 9 } };
    const c = fittedAirframeJson(constant as unknown as Record<string, unknown>, outcome(airframeOf(constant)), {
      dataDate: null,
      dataDateFrom: null,
      files: [],
      rateWindowS: 1,
    });
    expect((c['thrust'] as { thrust_n: number }).thrust_n).toBeCloseTo(9 * 0.8, 4);
    const table = {
      ...exampleAirframeJson(),
      thrust: {
        model: 'table',
        points: [
          [0, 14],
          [15, 11],
          [30, 6],
        ],
      },
    };
    const t = fittedAirframeJson(table as unknown as Record<string, unknown>, outcome(airframeOf(table)), {
      dataDate: null,
      dataDateFrom: null,
      files: [],
      rateWindowS: 1,
    });
    const points = (t['thrust'] as { points: number[][] }).points;
    expect(points.map((p) => p[0])).toEqual([0, 15, 30]);
    points.forEach((p, i) => expect(p[1]!).toBeCloseTo(table.thrust.points[i]![1]! * 0.8, 4));
  });
});

function airframeOf(json: unknown): Aircraft {
  const r = parseAircraft(json, 'test.json');
  if (!r.ok) throw new Error(r.problems.join('\n'));
  return r.value;
}
