/**
 * Ordinary least squares for the model fits of `fit`: a straight line y = a + b·x and a line through the origin
 * y = s·x, each with standard errors and 95 % confidence intervals from Student's t distribution. Pure.
 *
 * The intervals assume independent residuals; the caller thins correlated telemetry first (one sample per rate
 * window), as neighbouring frames at 50 Hz are far from independent.
 */

export interface Estimate {
  value: number;
  /** Standard error of the estimate. */
  se: number;
  /** 95 % confidence interval [lo, hi]. */
  ci95: [number, number];
}

export interface LineFit {
  intercept: Estimate;
  slope: Estimate;
  /** Coefficient of determination. */
  r2: number;
  /** Number of samples. */
  samples: number;
  /** Standard deviation of the residuals (n − 2 degrees of freedom). */
  residualSd: number;
  /** Mean of x and Σ(x − x̄)²: with residualSd, the confidence band of the fitted line (meanResponseBand). */
  meanX: number;
  sxx: number;
}

/** 95 % confidence band of the fitted line's mean at x: ŷ ± t·s·√(1/n + (x − x̄)²/Sxx). */
export function meanResponseBand(fit: LineFit, x: number): [number, number] {
  const y = fit.intercept.value + fit.slope.value * x;
  const half =
    studentTQuantile(0.975, fit.samples - 2) *
    fit.residualSd *
    Math.sqrt(1 / fit.samples + ((x - fit.meanX) * (x - fit.meanX)) / fit.sxx);
  return [y - half, y + half];
}

export interface ScaleFit {
  scale: Estimate;
  samples: number;
  residualSd: number;
}

/** ln Γ(x) for x > 0 (Lanczos approximation, g = 7, 9 terms; relative error below 1e-14). */
function logGamma(x: number): number {
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
  const xm = x - 1;
  let a = c[0]!;
  const t = xm + 7.5;
  for (let i = 1; i < 9; i++) a += c[i]! / (xm + i);
  return 0.5 * Math.log(2 * Math.PI) + (xm + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Continued fraction of the regularized incomplete beta function (modified Lentz's method). */
function betaContinuedFraction(a: number, b: number, x: number): number {
  const tiny = 1e-300;
  let c = 1;
  let d = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 300; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-15) break;
  }
  return h;
}

/** Regularized incomplete beta function I_x(a, b). */
function incompleteBeta(a: number, b: number, x: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const front = Math.exp(logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x));
  // The continued fraction converges fast on this side of the mean; use the symmetry on the other.
  if (x < (a + 1) / (a + b + 2)) return (front * betaContinuedFraction(a, b, x)) / a;
  return 1 - (front * betaContinuedFraction(b, a, 1 - x)) / b;
}

/** Cumulative distribution function of Student's t with `dof` degrees of freedom. */
export function studentTCdf(t: number, dof: number): number {
  const tail = 0.5 * incompleteBeta(dof / 2, 0.5, dof / (dof + t * t));
  return t >= 0 ? 1 - tail : tail;
}

/** Quantile of Student's t: the t with studentTCdf(t, dof) = p (bisection, to 1e-12). */
export function studentTQuantile(p: number, dof: number): number {
  if (!(p > 0 && p < 1) || !(dof > 0)) return Number.NaN;
  if (p === 0.5) return 0;
  let lo = -1;
  let hi = 1;
  while (studentTCdf(lo, dof) > p) lo *= 2;
  while (studentTCdf(hi, dof) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * Math.max(1, Math.abs(hi)); i++) {
    const mid = (lo + hi) / 2;
    if (studentTCdf(mid, dof) < p) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

function estimate(value: number, se: number, dof: number): Estimate {
  const t = studentTQuantile(0.975, dof);
  return { value, se, ci95: [value - t * se, value + t * se] };
}

/** y = a + b·x by least squares; needs ≥ 3 samples and two distinct x values. */
export function fitLine(x: readonly number[], y: readonly number[]): LineFit | null {
  const n = Math.min(x.length, y.length);
  if (n < 3) return null;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i]!;
    my += y[i]!;
  }
  mx /= n;
  my /= n;
  // Centred sums: no cancellation when x is far from 0.
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i]! - mx;
    const dy = y[i]! - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (!(sxx > 0)) return null;
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  let sse = 0;
  for (let i = 0; i < n; i++) {
    const r = y[i]! - intercept - slope * x[i]!;
    sse += r * r;
  }
  const dof = n - 2;
  const s2 = sse / dof;
  const seSlope = Math.sqrt(s2 / sxx);
  const seIntercept = Math.sqrt(s2 * (1 / n + (mx * mx) / sxx));
  return {
    intercept: estimate(intercept, seIntercept, dof),
    slope: estimate(slope, seSlope, dof),
    r2: syy > 0 ? 1 - sse / syy : 1,
    samples: n,
    residualSd: Math.sqrt(s2),
    meanX: mx,
    sxx,
  };
}

/** y = s·x by least squares (a line through the origin); needs ≥ 2 samples and some x ≠ 0. */
export function fitScale(x: readonly number[], y: readonly number[]): ScaleFit | null {
  const n = Math.min(x.length, y.length);
  if (n < 2) return null;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += x[i]! * x[i]!;
    sxy += x[i]! * y[i]!;
  }
  if (!(sxx > 0)) return null;
  const scale = sxy / sxx;
  let sse = 0;
  for (let i = 0; i < n; i++) {
    const r = y[i]! - scale * x[i]!;
    sse += r * r;
  }
  const dof = n - 1;
  const s2 = sse / dof;
  return { scale: estimate(scale, Math.sqrt(s2 / sxx), dof), samples: n, residualSd: Math.sqrt(s2) };
}
