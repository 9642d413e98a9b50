import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fitLine, fitScale, studentTCdf, studentTQuantile } from '../../src/core/least-squares.js';

// Reference values from SciPy's stats.linregress and stats.t.ppf and NumPy's linalg.lstsq, made by
// test/golden/make-least-squares.py (the library versions are recorded in the JSON).
interface LineCase {
  kind: 'line';
  x: number[];
  y: number[];
  intercept: number;
  intercept_se: number;
  slope: number;
  slope_se: number;
  r2: number;
  slope_ci95: [number, number];
  intercept_ci95: [number, number];
}
interface ScaleCase {
  kind: 'scale';
  x: number[];
  y: number[];
  scale: number;
  scale_se: number;
  scale_ci95: [number, number];
}
const reference = JSON.parse(readFileSync(new URL('../golden/least-squares.json', import.meta.url), 'utf8')) as {
  generator: string;
  cases: Array<LineCase | ScaleCase>;
  quantiles: Array<{ p: number; dof: number; t: number }>;
};

const close = (actual: number, expected: number, rel = 1e-9): void => {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.max(1, Math.abs(expected)));
};

describe("Student's t distribution", () => {
  it('gives the quantiles SciPy gives, from 1 to 1000 degrees of freedom', () => {
    for (const q of reference.quantiles) close(studentTQuantile(q.p, q.dof), q.t, 1e-8);
  });

  it('has a CDF that inverts its quantile', () => {
    for (const dof of [1, 4, 17, 250])
      for (const p of [0.01, 0.3, 0.975]) close(studentTCdf(studentTQuantile(p, dof), dof), p);
  });
});

describe('least squares', () => {
  it('fits a line with the slope, intercept, standard errors, intervals and R² of scipy.stats.linregress', () => {
    for (const c of reference.cases) {
      if (c.kind !== 'line') continue;
      const fit = fitLine(c.x, c.y)!;
      close(fit.slope.value, c.slope);
      close(fit.intercept.value, c.intercept);
      close(fit.slope.se, c.slope_se, 1e-8);
      close(fit.intercept.se, c.intercept_se, 1e-8);
      close(fit.r2, c.r2);
      close(fit.slope.ci95[0], c.slope_ci95[0], 1e-8);
      close(fit.slope.ci95[1], c.slope_ci95[1], 1e-8);
      close(fit.intercept.ci95[0], c.intercept_ci95[0], 1e-8);
      close(fit.intercept.ci95[1], c.intercept_ci95[1], 1e-8);
      expect(fit.samples).toBe(c.x.length);
    }
  });

  it('fits a line through the origin as numpy.linalg.lstsq does, with its interval', () => {
    for (const c of reference.cases) {
      if (c.kind !== 'scale') continue;
      const fit = fitScale(c.x, c.y)!;
      close(fit.scale.value, c.scale);
      close(fit.scale.se, c.scale_se, 1e-8);
      close(fit.scale.ci95[0], c.scale_ci95[0], 1e-8);
      close(fit.scale.ci95[1], c.scale_ci95[1], 1e-8);
    }
  });

  it('refuses what it cannot fit: too few samples or a single x value', () => {
    expect(fitLine([1, 2], [1, 2])).toBeNull();
    expect(fitLine([1, 1, 1], [1, 2, 3])).toBeNull();
    expect(fitScale([0, 0], [1, 2])).toBeNull();
  });
});
