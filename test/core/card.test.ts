import { describe, expect, it } from 'vitest';
import { buildCard, cardAirframeWarnings, defaultCardSpeeds, parseCard, type TestCard } from '../../src/core/card.js';
import { computeEnvelope } from '../../src/core/envelope.js';
import { cardToJson } from '../../src/report/card-report.js';
import { airframe, exampleAirframe, exampleAirframeJson } from '../helpers/airframes.js';

const G0 = 9.80665; // standard gravity, USSA 1976
const RHO_SL = 1.225; // sea-level ISA density, kg/m³ (USSA 1976)
const KNOT = 1852 / 3600; // m/s, exact definition

function card(result: ReturnType<typeof buildCard>): TestCard {
  if (!result.ok) throw new Error(result.reason);
  return result.card;
}

describe('card: default speeds', () => {
  it('spreads five speeds from 1.3·Vs1 to 2.5·Vs1, rounded to 0.5 m/s, when vne is higher', () => {
    const a = exampleAirframe({ vne_mps: 60 });
    const c = card(buildCard(a, { altitudeM: 0, temperature: {}, massKg: a.massKg }));
    // Vs1 = √(2W/(ρ·S·CLmax)) (common practice; FAA-H-8083-25 "stall speed"), ρ0 from USSA 1976.
    const vs1 = Math.sqrt((2 * 3.2 * G0) / (RHO_SL * 0.55 * 1.2));
    expect(c.conditions.vs1_mps).toBeCloseTo(vs1, 6);
    const expected = [0, 1, 2, 3, 4].map((i) => Math.round((1.3 * vs1 + (1.2 * vs1 * i) / 4) * 2) / 2);
    expect(c.conditions.speeds_mps).toEqual(expected);
  });

  it('stops at vne converted to TAS with the compressible relation: 100 kt CAS at 10 000 ft is 116.22 kt TAS', () => {
    // REFERENCES: CAS 100 kt at 10 000 ft (3048 m) ISA → TAS 116.22 kt (computed from the standard subsonic relations).
    const a = airframe({ ...exampleAirframeJson(), mass_kg: 40, vne_mps: 100 * KNOT });
    const c = card(buildCard(a, { altitudeM: 3048, temperature: {}, massKg: 40 }));
    expect(c.conditions.vne_tas_mps! / KNOT).toBeCloseTo(116.22, 1);
    expect(2.5 * c.conditions.vs1_mps).toBeGreaterThan(c.conditions.vne_tas_mps!);
    const speeds = c.conditions.speeds_mps;
    expect(speeds).toHaveLength(5);
    expect(speeds[0]).toBe(Math.round(1.3 * c.conditions.vs1_mps * 2) / 2);
    // The top speed is the vne TAS rounded to 0.5 m/s, never above vne.
    expect(speeds[4]).toBeLessThanOrEqual(c.conditions.vne_tas_mps!);
    expect(c.conditions.vne_tas_mps! - speeds[4]!).toBeLessThan(0.5);
  });

  it('never rounds a default speed above vne, and gives none when vne is below 1.3·Vs1', () => {
    // 13 + i·7.3/4 = 13, 14.825, 16.65, 18.475, 20.3 → 13, 15, 16.5, 18.5 and 20 (20.5 would pass vne).
    expect(defaultCardSpeeds(10, 20.3)).toEqual([13, 15, 16.5, 18.5, 20]);
    expect(defaultCardSpeeds(10, 12)).toEqual([]);
    const a = exampleAirframe({ vne_mps: 10 });
    const r = buildCard(a, { altitudeM: 0, temperature: {}, massKg: a.massKg });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toMatch(/give --speeds/);
  });
});

describe('card: targets', () => {
  const a = exampleAirframe();
  const speeds = [12, 16, 20, 24, 28];
  const c = card(buildCard(a, { altitudeM: 500, temperature: { isaDeviationK: 10 }, massKg: 3.2, speedsMps: speeds }));

  it("targets step·min(n_stall, n_structural) of the envelope's limits at the same conditions", () => {
    const env = computeEnvelope(a, { altitudeM: 500, temperature: { isaDeviationK: 10 }, massKg: 3.2 }, speeds);
    for (const p of c.points) {
      const e = env.points.find((q) => q.speedMps === p.tas_mps)!;
      expect(p.load_factor).toBeCloseTo(p.step * Math.min(e.nStall, e.nStructural), 12);
      // Level coordinated turn: n = 1/cos(bank) (Anderson, Aircraft Performance and Design, ch. 6).
      expect(1 / Math.cos((p.bank_deg * Math.PI) / 180)).toBeCloseTo(p.load_factor, 9);
      expect(p.predicted.utilization.stall).toBeCloseTo(p.load_factor / e.nStall, 12);
      expect(p.predicted.utilization.structure).toBeCloseTo(p.load_factor / e.nStructural, 12);
      expect(p.predicted.sustained).toBe(e.nThrust !== null && p.load_factor <= e.nThrust);
    }
  });

  it('orders the build-up by step ascending and, within a step, by speed descending, with ids P01…', () => {
    const keys = c.points.map((p) => [p.step, -p.tas_mps]);
    const sorted = [...keys].sort((x, y) => x[0]! - y[0]! || x[1]! - y[1]!);
    expect(keys).toEqual(sorted);
    expect(c.points.map((p) => p.id)).toEqual(c.points.map((_, i) => `P${String(i + 1).padStart(2, '0')}`));
    expect(c.points[0]).toMatchObject({ hold_s: 3, tolerance: { bank_deg: 3, tas_mps: 1 } });
  });

  it('lists targets below 1.05 g as excluded with the reason', () => {
    const low = c.excluded.filter((e) => e.load_factor < 1.05);
    expect(low.length).toBeGreaterThan(0);
    for (const e of low) expect(e.reason).toMatch(/below 1\.05/);
    expect(c.points.every((p) => p.load_factor >= 1.05)).toBe(true);
    // Every (step, speed) pair is either a point or an exclusion.
    expect(c.points.length + c.excluded.length).toBe(3 * speeds.length);
  });

  it('says a speed below the 1-g stall speed has no level flight, not that it is too close to wings level', () => {
    const a = exampleAirframe();
    // Vs1 = √(2W/(ρ·S·CLmax)) = √(2·3.2·9.80665/(1.225·0.55·1.2)) = 8.81 m/s (common practice; FAA-H-8083-25
    // "stall speed"; ρ0 from USSA 1976): 8 m/s lies below it, 10 m/s above (n_stall 1.29, 0.5·1.29 < 1.05).
    const vs1 = Math.sqrt((2 * 3.2 * G0) / (RHO_SL * 0.55 * 1.2));
    expect(vs1).toBeCloseTo(8.81, 2);
    const c = card(buildCard(a, { altitudeM: 0, temperature: {}, massKg: 3.2, speedsMps: [8, 10], steps: [0.5] }));
    const [at10, at8] = c.excluded;
    expect(at8!.tas_mps).toBe(8);
    expect(at8!.reason).toMatch(
      /below 1\.05 \(8\.0 m\/s is below the 1-g stall speed Vs1 8\.81 m\/s TAS: no level flight/,
    );
    expect(at10!.reason).toMatch(/below 1\.05 \(too close to wings level at 10\.0 m\/s\)/);
  });

  it('a bank of 60° at n = 2 as on the FAA load-factor chart', () => {
    // FAA-H-8083-25, "Load factors" chart: 60° of bank → 2.0 g. Structure-limited at 28 m/s (n_stall 7.3 > 4).
    const b = exampleAirframe({ n_limit_pos: 4 });
    const d = card(buildCard(b, { altitudeM: 0, temperature: {}, massKg: 3.2, speedsMps: [28], steps: [0.5] }));
    expect(d.points[0]!.load_factor).toBeCloseTo(2, 12);
    expect(d.points[0]!.bank_deg).toBeCloseTo(60, 9);
  });

  it('never puts a point at or beyond a warning threshold on the card, whatever the steps and thresholds', () => {
    const strict = exampleAirframe({
      alert_thresholds: { stall_caution: 0.5, stall_warning: 0.6, structure_warning: 0.7 },
    });
    for (const steps of [
      [0.55, 0.6, 0.65, 0.75, 0.99],
      [0.1, 0.3],
    ]) {
      const d = card(buildCard(strict, { altitudeM: 0, temperature: {}, massKg: 3.2, speedsMps: speeds, steps }));
      for (const p of d.points) {
        expect(p.predicted.utilization.stall!).toBeLessThan(0.6);
        expect(p.predicted.utilization.structure!).toBeLessThan(0.7);
      }
      for (const e of d.excluded.filter((x) => /warning threshold/.test(x.reason)))
        expect(e.step).toBeGreaterThanOrEqual(0.6);
    }
    // At 12 m/s the stall limit is the lower one (n_stall 1.86 < 3.8), so the stall utilization equals the step.
    const d = card(buildCard(strict, { altitudeM: 0, temperature: {}, massKg: 3.2, speedsMps: [12], steps: [0.65] }));
    expect(d.points).toEqual([]);
    expect(d.excluded[0]!.reason).toMatch(/stall warning threshold 0\.6/);
  });

  it('excludes a given speed above vne and refuses a step of 1 or more', () => {
    const d = card(buildCard(a, { altitudeM: 0, temperature: {}, massKg: 3.2, speedsMps: [31, 20] }));
    expect(d.excluded.filter((e) => e.tas_mps === 31).map((e) => e.reason)[0]).toMatch(/above vne/);
    expect(buildCard(a, { altitudeM: 0, temperature: {}, massKg: 3.2, steps: [0.5, 1] }).ok).toBe(false);
  });
});

describe('card: predicted acceleration', () => {
  it('is (T − D)/m in the level turn, computed by hand from the parabolic drag polar', () => {
    // Drag polar D = q·S·(CD0 + k·CL²) with CL = n·W/(q·S) (Anderson, Aircraft Performance and Design, ch. 2 and 6),
    // constant thrust 10 N, sea level ISA (ρ = 1.225, USSA 1976), V = 20 m/s, m = 3 kg, S = 0.5, CD0 0.03, k 0.05.
    const a = airframe({
      name: 'hand check',
      mass_kg: 3,
      wing_area_m2: 0.5,
      cl_max: 1.4,
      polar: { cd0: 0.03, k: 0.05 },
      thrust: { model: 'constant', thrust_n: 10 },
      n_limit_pos: 4,
    });
    const c = card(buildCard(a, { altitudeM: 0, temperature: {}, massKg: 3, speedsMps: [20], steps: [0.5] }));
    const p = c.points[0]!;
    // n_stall = qS·CLmax/W = 122.5·1.4/29.41995 = 5.829 > 4, so n = 0.5·4 = 2.
    expect(p.load_factor).toBeCloseTo(2, 12);
    // q·S = 0.5·1.225·20²·0.5 = 122.5 N; CL = 2·29.41995/122.5 = 0.480326; CD = 0.03 + 0.05·0.230713 = 0.0415357;
    // D = 122.5·0.0415357 = 5.08812 N; (T − D)/m = (10 − 5.08812)/3 = 1.63729 m/s².
    expect(p.predicted.dvdt_mps2!).toBeCloseTo(1.63729, 4);
    expect(p.predicted.sustained).toBe(true);
    // Thrust limit n_T = (qS/W)·√((T − qS·CD0)/(qS·k)) (Anderson ch. 6) = 4.1638·√(6.325/6.125) = 4.2313.
    expect(p.predicted.utilization.thrust!).toBeCloseTo(2 / 4.2313, 3);
  });

  it('is null, and the turn not claimed sustainable, where a thrust table does not cover the speed', () => {
    const a = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [5, 12],
          [15, 8],
        ],
      },
    });
    const c = card(buildCard(a, { altitudeM: 0, temperature: {}, massKg: 3.2, speedsMps: [20, 14] }));
    const fast = c.points.filter((p) => p.tas_mps === 20);
    expect(fast.length).toBeGreaterThan(0);
    for (const p of fast) expect(p.predicted).toMatchObject({ dvdt_mps2: null, sustained: false });
    expect(c.points.some((p) => p.tas_mps === 14 && p.predicted.dvdt_mps2 !== null)).toBe(true);
  });
});

describe('card file', () => {
  const a = exampleAirframe();
  const made = cardToJson(card(buildCard(a, { altitudeM: 100, temperature: {}, massKg: 3.2 })));

  it('reads back a card that card wrote', () => {
    const r = parseCard(JSON.parse(JSON.stringify(made)), 'c.json');
    expect(r.ok).toBe(true);
    if (r.ok) expect(r.value.points.map((p) => p.id)).toEqual(made.points.map((p) => p.id));
  });

  it('refuses a malformed card with every problem listed', () => {
    const bad = JSON.parse(JSON.stringify(made)) as { points: Array<Record<string, unknown>>; conditions: object };
    bad.points[0]!['bank_deg'] = 'steep';
    bad.points[1]!['id'] = bad.points[0]!['id'];
    delete bad.points[2]!['hold_s'];
    (bad.points[3]!['tolerance'] as Record<string, unknown>)['tas_mps'] = -1;
    bad.points[4]!['load_factor'] = 3; // no longer matches its bank
    bad.points[5]!['colour'] = 'red';
    const r = parseCard(bad, 'bad.json');
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const text = r.problems.join('\n');
    expect(text).toMatch(/bad\.json: points\[0\]\.bank_deg must be a number/);
    expect(text).toMatch(/points\[1\]\.id must be unique/);
    expect(text).toMatch(/points\[2\]\.hold_s is required/);
    expect(text).toMatch(/points\[3\]\.tolerance\.tas_mps must be a positive number/);
    expect(text).toMatch(/points\[4\]\.bank_deg must match load_factor 3/);
    expect(text).toMatch(/points\[5\]\.colour is not a known key/);
    expect(parseCard([], 'x.json').ok).toBe(false);
  });

  it('warns when the card was made for another airframe name or mass', () => {
    const r = parseCard(made, 'c.json');
    if (!r.ok) throw new Error('card');
    expect(cardAirframeWarnings(r.value, a, 3.2, 'c.json')).toEqual([]);
    const other = exampleAirframe({ name: 'Another airframe' });
    expect(cardAirframeWarnings(r.value, other, 3.2, 'c.json').join()).toMatch(
      /made for "Example airframe", not for "Another airframe"/,
    );
    expect(cardAirframeWarnings(r.value, a, 3.5, 'c.json').join()).toMatch(/made for 3\.2 kg, not 3\.5 kg/);
  });
});
