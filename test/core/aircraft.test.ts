import { describe, expect, it } from 'vitest';
import { parseAircraft } from '../../src/core/aircraft.js';
import { exampleAirframeJson } from '../helpers/airframes.js';

function problemsFor(json: unknown): string[] {
  const result = parseAircraft(json, 'airframe.json');
  if (result.ok) throw new Error('expected the file to be refused');
  return result.problems;
}

describe('the airframe file', () => {
  it('accepts the contract example', () => {
    const result = parseAircraft(exampleAirframeJson(), 'airframe.json');
    expect(result.ok).toBe(true);
  });

  it('derives k = 1/(π·e·AR) from aspect ratio and Oswald factor', () => {
    // Induced drag factor of the parabolic polar (Anderson, Aircraft Performance and Design, ch. 2).
    const result = parseAircraft(
      { ...exampleAirframeJson(), polar: { cd0: 0.03, aspect_ratio: 8, oswald: 0.8 } },
      'a.json',
    );
    expect(result.ok && result.value.k).toBeCloseTo(1 / (Math.PI * 0.8 * 8), 12);
  });

  it('names the file, the key, the value and what was expected', () => {
    const json = exampleAirframeJson() as Record<string, unknown>;
    const problems = problemsFor({ ...json, thrust: { ...(json['thrust'] as object), power_w: 'lots' } });
    expect(problems).toEqual(['airframe.json: thrust.power_w must be a positive number (got "lots")']);
  });

  const mistakes: Array<[string, Record<string, unknown>, RegExp]> = [
    ['a missing mass', { mass_kg: undefined }, /^airframe\.json: mass_kg is required/],
    ['a negative wing area', { wing_area_m2: -1 }, /wing_area_m2 must be a positive number \(got -1\)/],
    [
      'an unknown thrust model',
      { thrust: { model: 'jet' } },
      /thrust\.model must be "constant", "power" or "table" \(got "jet"\)/,
    ],
    [
      'a polar with neither k nor aspect ratio',
      { polar: { cd0: 0.03 } },
      /polar must give k, or both aspect_ratio and oswald/,
    ],
    ['a positive cl_min', { cl_min: 0.5 }, /cl_min must be a negative number \(got 0.5\)/],
    [
      'an unsorted calibration table',
      {
        airspeed_calibration: [
          [20, 20],
          [10, 10],
        ],
      },
      /airspeed_calibration\[1\]\[0\] must increase/,
    ],
    [
      'a calibration table whose CAS column falls',
      {
        airspeed_calibration: [
          [10, 12],
          [20, 11],
        ],
      },
      /airspeed_calibration\[1\]\[1\] must increase \(CAS strictly increasing/,
    ],
    [
      'a calibration table whose CAS column repeats a value',
      {
        airspeed_calibration: [
          [10, 12],
          [20, 12],
        ],
      },
      /airspeed_calibration\[1\]\[1\] must increase/,
    ],
    ['a mass of 1e-9 kg', { mass_kg: 1e-9 }, /mass_kg must be a mass from 0\.05 to 10000 kg \(got 1e-9\)/],
    ['a mass of 4200 kg typed for 4.2', { mass_kg: 42000 }, /mass_kg must be a mass from 0\.05 to 10000 kg/],
    [
      'a thrust table with one point',
      { thrust: { model: 'table', points: [[10, 5]] } },
      /thrust\.points must hold at least two/,
    ],
    [
      'a propeller efficiency above 1',
      { thrust: { model: 'power', power_w: 100, prop_efficiency: 1.5, static_thrust_n: 5 } },
      /thrust\.prop_efficiency must be a number above 0 and at most 1 \(got 1.5\)/,
    ],
    ['a text where a number belongs', { cl_max: '1.2' }, /cl_max must be a positive number \(got "1.2"\)/],
  ];
  for (const [what, change, pattern] of mistakes) {
    it(`refuses ${what} and names the key`, () => {
      const problems = problemsFor({ ...exampleAirframeJson(), ...change });
      expect(problems.some((p) => pattern.test(p))).toBe(true);
    });
  }

  it('lets an unknown key through with a warning that names it', () => {
    const result = parseAircraft({ ...exampleAirframeJson(), notes: 'bench airframe', mass_kgs: 3 }, 'airframe.json');
    expect(result.ok).toBe(true);
    if (result.ok) {
      expect(result.warnings).toEqual([
        'airframe.json: notes is not a known key (ignored)',
        'airframe.json: mass_kgs is not a known key (ignored)',
      ]);
      expect(result.value.massKg).toBe(3.2);
    }
  });

  it('accepts the "fitted" record that fit --write-airframe adds, without a warning, and ignores it', () => {
    const fitted = { data_date: '2026-05-04', files: ['flight.ndjson'], polar: { cd0: { value: 0.031 } } };
    const result = parseAircraft({ ...exampleAirframeJson(), fitted }, 'airframe.json');
    const plain = parseAircraft(exampleAirframeJson(), 'airframe.json');
    expect(result.ok && plain.ok).toBe(true);
    if (result.ok && plain.ok) {
      expect(result.warnings).toEqual([]);
      expect(result.value).toEqual(plain.value);
    }
    expect(problemsFor({ ...exampleAirframeJson(), fitted: 'yes' })[0]).toMatch(/fitted must be an object/);
  });

  it('names a misspelt key beside the problem it causes', () => {
    const { mass_kg: _omitted, ...rest } = exampleAirframeJson() as Record<string, unknown>;
    const problems = problemsFor({ ...rest, mass_kgs: 3.2 });
    expect(problems.join('\n')).toMatch(/mass_kg is required[\s\S]*mass_kgs is not a known key/);
  });

  it('lists every mistake, not only the first', () => {
    const problems = problemsFor({ ...exampleAirframeJson(), mass_kg: 0, cl_max: 'high', vne_mps: -3, colour: 'red' });
    expect(problems).toHaveLength(4);
    expect(problems.join('\n')).toMatch(/mass_kg[\s\S]*cl_max[\s\S]*vne_mps[\s\S]*colour/);
  });

  it('refuses something that is not an object', () => {
    expect(problemsFor([1, 2])[0]).toMatch(/must be a JSON object/);
  });
});
