/**
 * The energy keys of the margin record as the frame engine makes them: rates over the window, Ps measured against
 * modelled, the residual's mean, the time to the stall and the speed band, with the windows restarted at breaks.
 * Simulated flights come from the point-mass simulator (its own integration of m·dV/dt = T − D − W·sin γ,
 * dh/dt = V·sin γ; Anderson, Aircraft Performance and Design, ch. 4 — from memory).
 */
import { describe, expect, it } from 'vitest';
import type { Aircraft } from '../../src/core/aircraft.js';
import { createFrameEngine } from '../../src/core/frame-engine.js';
import type { Frame } from '../../src/core/frame.js';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { createModelCheckAccumulator } from '../../src/core/model-check.js';
import { sustainedBandMps } from '../../src/core/sustained-band.js';
import { stallSpeedMps, topSpeedMps, vneTasMps } from '../../src/core/performance.js';
import { isaPressurePa } from '../../src/core/atmosphere.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { parseFrameLine } from '../../src/decode/frame-line.js';
import { createFrameWriter } from '../../src/sim/frames.js';
import { parseFlightPlan } from '../../src/sim/plan.js';
import { simulateFlight } from '../../src/sim/point-mass.js';
import { airframe, exampleAirframe, exampleAirframeJson } from '../helpers/airframes.js';

function frameOf(json: Record<string, unknown>): Frame {
  const verdict = parseFrameLine(JSON.stringify(json));
  if (!verdict.ok) throw new Error(verdict.reason);
  return verdict.frame;
}

/**
 * An invented test plan: glides at two speeds and full-throttle level turns and accelerations, long enough that
 * the second or so after each change (where the window's rates lag the flight) weighs little in the means.
 */
const ENERGY_PLAN = {
  name: 'energy-check',
  start: { alt_m: 400, tas_mps: 18 },
  noise: { nz_sd: 0, airspeed_sd_mps: 0 },
  segments: [
    { type: 'straight', duration_s: 4, label: 'trim' },
    { type: 'glide', duration_s: 25, tas_mps: 17, label: 'glide 17' },
    { type: 'glide', duration_s: 25, tas_mps: 22, label: 'glide 22' },
    { type: 'straight', duration_s: 15, throttle: 1, label: 'full-throttle acceleration' },
    { type: 'turn', duration_s: 25, bank_deg: 40, throttle: 1, label: 'full-throttle turn' },
    { type: 'glide', duration_s: 20, tas_mps: 19, bank_deg: 25, label: 'gliding turn' },
  ],
};

/** Fly the plan with `truth` and return the frames at `rateHz`. */
function simulatedFrames(truth: Aircraft, rateHz = 50, plan: object = ENERGY_PLAN): Frame[] {
  const parsed = parseFlightPlan(plan, 'plan.json');
  if (!parsed.ok) throw new Error(parsed.problems.join('\n'));
  const write = createFrameWriter(truth, parsed.value, { seed: 7 });
  const frames: Frame[] = [];
  for (const s of simulateFlight(truth, parsed.value, { rateHz })) frames.push(frameOf(write(s)));
  return frames;
}

function recordsOf(aircraft: Aircraft, frames: readonly Frame[]): MarginRecord[] {
  const engine = createFrameEngine(aircraft);
  const out: MarginRecord[] = [];
  for (const f of frames) {
    const rec = engine.push(f);
    if (rec !== null) out.push(rec);
  }
  return out;
}

describe('the energy keys of the margin record', () => {
  it('give the exact rates of straight lines over the window, and Ps = dh/dt + (V/g)·dV/dt', () => {
    const ac = exampleAirframe();
    const frames: Frame[] = [];
    // TAS rising 0.5 m/s², climbing 2 m/s, 20 Hz, no smoothing so tas_mps is the frame's TAS.
    for (let i = 0; i <= 60; i++) {
      const t = i * 0.05;
      frames.push(frameOf({ t_s: t, tas_mps: 18 + 0.5 * t, alt_m: 100 + 2 * t, nz: 1, bank_deg: 0 }));
    }
    const engine = createFrameEngine(ac, { smoothTauS: 0 });
    const recs = frames.map((f) => engine.push(f)!);
    // The window [t − 1, t] needs 3 frames spanning 0.5 s: null before t = 0.5 s.
    expect(recs[9]!.dvdt_mps2).toBeNull();
    for (const rec of recs.slice(10)) {
      expect(rec.dvdt_mps2).toBeCloseTo(0.5, 9);
      expect(rec.dhdt_mps).toBeCloseTo(2, 9);
      expect(rec.bank_rate_dps).toBeCloseTo(0, 9);
      expect(rec.ps_mps).toBeCloseTo(2 + (rec.tas_mps / G0_MPS2) * 0.5, 9);
    }
  });

  it('restart the rate window at a break (a gap over 1 s)', () => {
    const ac = exampleAirframe();
    const engine = createFrameEngine(ac);
    const rec = (t: number) => engine.push(frameOf({ t_s: t, tas_mps: 18, alt_m: 100, nz: 1 }))!;
    for (let i = 0; i <= 20; i++) {
      const dvdt = rec(i * 0.05).dvdt_mps2;
      expect(dvdt === null, `t ${i * 0.05}`).toBe(i < 10);
    }
    // 1.5 s gap: the window starts again and needs half a second of frames.
    expect(rec(2.5).dvdt_mps2).toBeNull();
    expect(rec(2.6).dvdt_mps2).toBeNull();
    expect(rec(2.8).dvdt_mps2).toBeNull();
    expect(rec(3.0).dvdt_mps2).toBeCloseTo(0, 9);
  });

  it('use the window the options give (--rate-window)', () => {
    const ac = exampleAirframe();
    const engine = createFrameEngine(ac, { rateWindowS: 0.2 });
    const recs = [0, 0.05, 0.1].map((t) => engine.push(frameOf({ t_s: t, tas_mps: 18 + t, alt_m: 100, nz: 1 }))!);
    expect(recs[2]!.dvdt_mps2).toBeCloseTo(1, 9);
  });

  it('model Ps only at full throttle or idle, or with a throttle assumption for frames without one', () => {
    const ac = exampleAirframe();
    const push = (engine: ReturnType<typeof createFrameEngine>, throttle: number | undefined) => {
      let last: MarginRecord | null = null;
      for (let i = 0; i <= 20; i++) {
        const json: Record<string, unknown> = { t_s: i * 0.05, tas_mps: 18, alt_m: 100, nz: 1 };
        if (throttle !== undefined) json['throttle'] = throttle;
        last = engine.push(frameOf(json));
      }
      return last!;
    };
    expect(push(createFrameEngine(ac), 1).ps_model_mps).not.toBeNull();
    expect(push(createFrameEngine(ac), 0).ps_model_mps).toBeLessThan(0);
    expect(push(createFrameEngine(ac), 0.5).ps_model_mps).toBeNull();
    expect(push(createFrameEngine(ac), undefined).ps_model_mps).toBeNull();
    const assumedIdle = push(createFrameEngine(ac, { assumeThrottle: 'idle' }), undefined);
    expect(assumedIdle.ps_model_mps).toBeLessThan(0);
    expect(assumedIdle.throttle).toBeNull();
    // Level, steady flight at idle: measured Ps 0, modelled −V·D/W, so the residual is +V·D/W.
    expect(assumedIdle.ps_residual_mps).toBeCloseTo(-assumedIdle.ps_model_mps!, 9);
    expect(assumedIdle.ps_residual_mean_3s_mps).toBeCloseTo(assumedIdle.ps_residual_mps!, 9);
  });

  it('keep the residual mean out of the window after a throttle step, where the rates still lag', () => {
    const ac = exampleAirframe();
    const engine = createFrameEngine(ac);
    const at = (t: number, throttle: number) =>
      engine.push(frameOf({ t_s: t, tas_mps: 18, alt_m: 100, nz: 1, throttle }))!;
    let rec: MarginRecord | null = null;
    for (let i = 0; i <= 60; i++) rec = at(i * 0.05, 0);
    expect(rec!.ps_residual_mean_3s_mps).not.toBeNull();
    // Full throttle from t = 3.05 s: a residual at once, but the mean restarts and waits a whole window (1 s).
    const step = at(3.05, 1);
    expect(step.ps_residual_mps).not.toBeNull();
    expect(step.ps_residual_mean_3s_mps).toBeNull();
    for (let i = 62; i < 81; i++) expect(at(i * 0.05, 1).ps_residual_mean_3s_mps).toBeNull();
    const after = at(4.1, 1);
    expect(after.ps_residual_mean_3s_mps).toBeCloseTo(after.ps_residual_mps!, 9);
  });

  it('give the speed band of sustained-band.ts at the record’s density, mass and n', () => {
    const ac = exampleAirframe();
    const engine = createFrameEngine(ac);
    let rec: MarginRecord | null = null;
    for (let i = 0; i <= 10; i++)
      rec = engine.push(frameOf({ t_s: i * 0.05, tas_mps: 20, alt_m: 200, nz: 1.5, bank_deg: 48 }));
    const vs1 = stallSpeedMps(ac, rec!.density_kg_m3, rec!.mass_kg);
    const top = topSpeedMps(vneTasMps(ac, isaPressurePa(200), rec!.temperature_k), vs1);
    const band = sustainedBandMps(ac, rec!.density_kg_m3, rec!.mass_kg, rec!.n_measured, top);
    expect(band).not.toBeNull();
    expect(rec!.sustained_band_mps).toEqual([band!.loMps, band!.hiMps]);
    // A summary that shows no record can leave the search out.
    const quiet = createFrameEngine(ac, { speedBand: false });
    expect(quiet.push(frameOf({ t_s: 0, tas_mps: 20, alt_m: 200, nz: 1.5 }))!.sustained_band_mps).toBeNull();
  });

  it('predict the time to the stall caution while the aircraft decelerates in a turn', () => {
    const ac = exampleAirframe();
    const engine = createFrameEngine(ac, { smoothTauS: 0 });
    let rec: MarginRecord | null = null;
    // Decelerating at 1 m/s² at n = 1.8.
    for (let i = 0; i <= 20; i++)
      rec = engine.push(frameOf({ t_s: i * 0.05, tas_mps: 20 - i * 0.05, alt_m: 100, nz: 1.8 }));
    const r = rec!;
    const u = r.utilization.stall!;
    const vStar = r.tas_mps * Math.sqrt(u / ac.thresholds.stallCaution);
    expect(r.dvdt_mps2).toBeCloseTo(-1, 9);
    expect(r.time_to_stall_caution_s).toBeCloseTo((r.tas_mps - vStar) / 1, 9);
    expect(r.time_to_stall_warning_s!).toBeGreaterThan(r.time_to_stall_caution_s!);
  });
});

describe('the model check over a simulated flight', () => {
  it('finds residuals near zero at full throttle and idle when the airframe file matches the aircraft', () => {
    const ac = exampleAirframe();
    const recs = recordsOf(ac, simulatedFrames(ac));
    const check = createModelCheckAccumulator(ac);
    for (const r of recs) check.push(r);
    const result = check.finish();
    expect(result.full!.frames).toBeGreaterThan(400);
    expect(result.idle!.frames).toBeGreaterThan(800);
    expect(Math.abs(result.full!.meanResidualMps)).toBeLessThan(0.1);
    expect(Math.abs(result.idle!.meanResidualMps)).toBeLessThan(0.1);
    expect(Math.abs(result.idle!.dragErrorPct!)).toBeLessThan(3);
    expect(Math.abs(result.full!.dragErrorPct!)).toBeLessThan(3);
  });

  it('finds a drag error near +20 % when the aircraft has 20 % more drag than the file', () => {
    const file = exampleAirframe();
    const json = exampleAirframeJson() as unknown as Record<string, unknown>;
    const polar = json['polar'] as { cd0: number; k: number };
    const truth = airframe({ ...json, polar: { cd0: polar.cd0 * 1.2, k: polar.k * 1.2 } });
    const recs = recordsOf(file, simulatedFrames(truth));
    const check = createModelCheckAccumulator(file);
    for (const r of recs) check.push(r);
    const result = check.finish();
    expect(result.idle!.meanResidualMps).toBeLessThan(-0.1);
    expect(result.idle!.dragErrorPct!).toBeGreaterThan(17);
    expect(result.idle!.dragErrorPct!).toBeLessThan(23);
    expect(result.full!.dragErrorPct!).toBeGreaterThan(15);
    expect(result.full!.dragErrorPct!).toBeLessThan(25);
  });
});
