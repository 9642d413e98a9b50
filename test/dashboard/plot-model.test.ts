import { describe, expect, it } from 'vitest';
import { stallSpeedMps, thrustLoadFactor } from '../../src/core/performance.js';
import { computeLayout, MIN_COLS, MIN_ROWS, type Rect } from '../../src/dashboard/layout.js';
import {
  buildPlotModel,
  isMaterialChange,
  niceStep,
  type PlotInput,
  type PlotModel,
} from '../../src/dashboard/plot-model.js';
import { rasterizePolyline } from '../../src/dashboard/raster.js';
import { createTrail } from '../../src/dashboard/trail.js';
import { AIRCRAFT } from './records.js';

const SEA_LEVEL = { densityKgM3: 1.225, massKg: 3.2 };

function plot(overrides: Partial<PlotInput> = {}): PlotModel {
  return buildPlotModel({
    aircraft: AIRCRAFT,
    thresholds: AIRCRAFT.thresholds,
    conditions: SEA_LEVEL,
    trail: [],
    nowTS: null,
    current: null,
    stale: false,
    units: 'mps',
    cols: 60,
    rows: 20,
    ...overrides,
  });
}

/** Inverse of the model's mapping, to read a pixel back as (speed, n). */
function toData(m: PlotModel, [x, y]: readonly [number, number]): { v: number; n: number } {
  return {
    v: m.xMinMps + ((x - m.area.left) / (m.area.width - 1)) * (m.xMaxMps - m.xMinMps),
    n: m.yMin + (1 - (y - m.area.top) / (m.area.height - 1)) * (m.yMax - m.yMin),
  };
}

const line = (m: PlotModel, name: string) => m.polylines.filter((p) => p.name === name);

describe('n–V plane', () => {
  const m = plot();
  const pxPerMps = (m.area.width - 1) / (m.xMaxMps - m.xMinMps);
  const pxPerG = (m.area.height - 1) / (m.yMax - m.yMin);

  it('spans 0 to past vne in speed and past the structural limit in load factor', () => {
    expect(m.xMinMps).toBe(0);
    expect(m.xMaxMps).toBeGreaterThanOrEqual(AIRCRAFT.vneMps!);
    expect(m.yMax).toBeGreaterThan(AIRCRAFT.nLimitPos);
  });

  it('draws the stall curve through n = 1 at Vs1 and n = 2 at Vs1·√2', () => {
    // Example airframe at sea level ISA: Vs1 = 8.811 m/s (the worked example); n_stall grows with V²
    // (n = q·S·CLmax/W, Anderson ch. 6), so n = 2 at √2·Vs1 (+41.4 %, FAA-H-8083-25 load-factor chart).
    const vs1 = stallSpeedMps(AIRCRAFT, SEA_LEVEL.densityKgM3, SEA_LEVEL.massKg);
    expect(vs1).toBeCloseTo(8.811, 3);
    const pts = line(m, 'stall')[0]!.points.map((p) => toData(m, p));
    const near = (v: number) => pts.reduce((best, p) => (Math.abs(p.v - v) < Math.abs(best.v - v) ? p : best));
    expect(Math.abs(near(vs1).n - 1) * pxPerG).toBeLessThanOrEqual(1.5);
    expect(Math.abs(near(vs1 * Math.SQRT2).n - 2) * pxPerG).toBeLessThanOrEqual(1.5);
  });

  it('draws the structural limit as a level line at n_limit_pos across the plane', () => {
    const s = line(m, 'structure')[0]!;
    const [a, b] = s.points.map((p) => toData(m, p));
    expect(Math.abs(a!.n - AIRCRAFT.nLimitPos) * pxPerG).toBeLessThanOrEqual(0.5);
    expect(a!.n).toBeCloseTo(b!.n, 12);
    expect(a!.v).toBeCloseTo(0, 6);
    expect(b!.v).toBeCloseTo(m.xMaxMps, 6);
  });

  it('draws the thrust-limited curve where it lies under the stall curve, on the core values', () => {
    const runs = line(m, 'thrust');
    expect(runs.length).toBeGreaterThan(0);
    for (const p of runs.flatMap((r) => r.points)) {
      const d = toData(m, p);
      // Pixels are rounded: compare with the core's value over ±½ pixel of speed, ±1 pixel of n.
      const around = [-0.5, 0, 0.5].map((dx) =>
        thrustLoadFactor(AIRCRAFT, d.v + dx / pxPerMps, SEA_LEVEL.densityKgM3, SEA_LEVEL.massKg)!,
      );
      expect(d.n).toBeGreaterThanOrEqual(Math.min(...around) - 1 / pxPerG);
      expect(d.n).toBeLessThanOrEqual(Math.max(...around) + 1 / pxPerG);
    }
  });

  it('labels the curves in words and the axes with units', () => {
    const texts = m.texts.map((t) => t.text);
    expect(texts).toContain('stall');
    expect(texts).toContain('thrust');
    expect(texts).toContain('n limit 3.8');
    expect(texts).toContain('n g');
    expect(texts).toContain('TAS m/s');
    expect(texts.filter((t) => /^\s*\d+$/.test(t)).length).toBeGreaterThanOrEqual(4);
  });

  it('labels the speed axis in the chosen unit at round values', () => {
    const kt = plot({ units: 'kt' });
    const texts = kt.texts.map((t) => t.text);
    expect(texts).toContain('TAS kt');
    const row = kt.texts.find((t) => t.text === 'TAS kt')!.row;
    const ticks = kt.texts.filter((t) => t.row === row && /^\d+$/.test(t.text)).map((t) => Number(t.text));
    expect(ticks[0]).toBe(0);
    expect(ticks.every((v) => v % 10 === 0)).toBe(true);
  });

  it('keeps every label inside the canvas', () => {
    for (const t of plot({ current: { tasMps: 29, n: 3.7, level: 'warning' } }).texts) {
      expect(t.col).toBeGreaterThanOrEqual(0);
      expect(t.col + Array.from(t.text).length).toBeLessThanOrEqual(60);
      expect(t.row).toBeGreaterThanOrEqual(0);
      expect(t.row).toBeLessThan(20);
    }
  });
});

describe('current point and trail', () => {
  it('puts the point at its speed and load factor, labelled with the level word', () => {
    const m = plot({ current: { tasMps: 15, n: 2, level: 'caution' } });
    const d = toData(m, [m.marker!.x, m.marker!.y]);
    expect(d.v).toBeCloseTo(15, 0);
    expect(d.n).toBeCloseTo(2, 1);
    expect(m.marker!.tone).toBe('caution');
    expect(m.texts.some((t) => t.text === '◀ CAUTION')).toBe(true);
  });

  it('marks the point STALE in words when the data are stale', () => {
    const m = plot({ current: { tasMps: 15, n: 2, level: 'warning' }, stale: true });
    expect(m.marker!.tone).toBe('stale');
    expect(m.texts.some((t) => t.text === '◀ STALE')).toBe(true);
  });

  it('widens the speed axis for a point past it', () => {
    expect(plot({ current: { tasMps: 45, n: 1, level: 'normal' } }).xMaxMps).toBeGreaterThanOrEqual(45 * 1.1);
  });

  it('draws the last 3 s bright and the older trail dim, broken at gaps', () => {
    const pts = [
      ...Array.from({ length: 40 }, (_, i) => ({ tS: i * 0.2, tasMps: 15 + i * 0.05, n: 1.2 })),
      { tS: 10, tasMps: 18, n: 1.5 }, // after a 2.2 s gap
    ];
    const m = plot({ trail: pts, nowTS: 10 });
    expect(line(m, 'trail-old').length).toBe(1);
    expect(line(m, 'trail-new').length).toBe(2);
    expect(line(m, 'trail-new')[1]!.points.length).toBe(1);
  });

  it('redraws the curves only for a material change of density or mass', () => {
    expect(isMaterialChange(null, SEA_LEVEL)).toBe(true);
    expect(isMaterialChange(SEA_LEVEL, { densityKgM3: 1.2255, massKg: 3.2 })).toBe(false);
    expect(isMaterialChange(SEA_LEVEL, { densityKgM3: 1.2, massKg: 3.2 })).toBe(true);
    expect(isMaterialChange(SEA_LEVEL, { densityKgM3: 1.225, massKg: 3.0 })).toBe(true);
  });
});

describe('trail store', () => {
  it('keeps 10 s of data time, thins points closer than 50 ms, and restarts when time goes back', () => {
    const trail = createTrail();
    for (let i = 0; i <= 15_000; i++) trail.push({ tS: i / 1000, tasMps: 15, n: 1 }); // 15 s at 1 kHz
    const pts = trail.points();
    expect(pts[0]!.tS).toBeGreaterThanOrEqual(5);
    expect(pts.length).toBeLessThanOrEqual(201);
    trail.push({ tS: 2, tasMps: 15, n: 1 });
    expect(trail.points().length).toBe(1);
    trail.clear();
    expect(trail.points().length).toBe(0);
  });
});

describe('niceStep and raster', () => {
  it('picks 1, 2 or 5 × a power of ten', () => {
    expect(niceStep(30, 6)).toBe(5);
    expect(niceStep(4.5, 3)).toBe(2);
    expect(niceStep(100, 10)).toBe(10);
    expect(niceStep(0.7, 7)).toBeCloseTo(0.1, 12);
  });

  it('rasterizes a polyline without gaps or repeated joints, and dots it', () => {
    const px = rasterizePolyline([
      [0, 0],
      [4, 2],
      [4, 5],
    ]);
    expect(px[0]).toEqual([0, 0]);
    expect(px[px.length - 1]).toEqual([4, 5]);
    for (let i = 1; i < px.length; i++) {
      expect(Math.max(Math.abs(px[i]![0] - px[i - 1]![0]), Math.abs(px[i]![1] - px[i - 1]![1]))).toBe(1);
    }
    expect(
      rasterizePolyline(
        [
          [0, 0],
          [9, 0],
        ],
        3,
      ).map((p) => p[0]),
    ).toEqual([0, 3, 6, 9]);
  });
});

describe('layout', () => {
  const overlaps = (a: Rect, b: Rect) =>
    a.left < b.left + b.width && b.left < a.left + a.width && a.top < b.top + b.height && b.top < a.top + a.height;

  for (const [cols, rows] of [
    [MIN_COLS, MIN_ROWS],
    [100, 30],
    [120, 40],
    [200, 60],
  ] as const) {
    it(`tiles the screen without overlap at ${cols}×${rows}`, () => {
      const l = computeLayout(cols, rows);
      expect(l.tooSmall).toBe(false);
      const panels = [l.banner, l.plot, l.events, l.margins, l.readouts, l.link, l.keys, l.caution];
      let area = 0;
      for (const [i, a] of panels.entries()) {
        expect(a.left + a.width).toBeLessThanOrEqual(cols);
        expect(a.top + a.height).toBeLessThanOrEqual(rows);
        expect(a.height).toBeGreaterThanOrEqual(1);
        area += a.width * a.height;
        for (const b of panels.slice(i + 1)) expect(overlaps(a, b)).toBe(false);
      }
      expect(area).toBe(cols * rows);
      expect(l.plot.width).toBeGreaterThan(l.margins.width);
    });
  }

  for (const [cols, rows] of [
    [MIN_COLS, MIN_ROWS],
    [100, 30],
    [120, 40],
  ] as const) {
    it(`puts the test point panel between the plot and the exceedances at ${cols}×${rows}, still tiling the screen`, () => {
      const plain = computeLayout(cols, rows);
      const l = computeLayout(cols, rows, { card: true });
      const panels = [l.banner, l.plot, l.card, l.events, l.margins, l.readouts, l.link, l.keys, l.caution];
      let area = 0;
      for (const [i, a] of panels.entries()) {
        expect(a.height).toBeGreaterThanOrEqual(1);
        area += a.width * a.height;
        for (const b of panels.slice(i + 1)) expect(overlaps(a, b)).toBe(false);
      }
      expect(area).toBe(cols * rows);
      expect(l.card.top).toBe(l.plot.top + l.plot.height);
      expect(l.events.top).toBe(l.card.top + l.card.height);
      expect(l.card.height).toBeGreaterThanOrEqual(4); // two lines inside the border at least
      expect(l.events).toEqual(plain.events); // the exceedance list keeps its size; the plot gives the rows
      expect(l.margins).toEqual(plain.margins);
      expect(plain.card.height).toBe(0);
    });
  }

  it('is too small below 80×24', () => {
    expect(computeLayout(79, 24).tooSmall).toBe(true);
    expect(computeLayout(80, 23).tooSmall).toBe(true);
  });
});

describe('the sustained band and the test point on the plane', () => {
  it('draws the band as a dotted horizontal segment at the present n, from its low to its high speed', () => {
    const m = plot({ current: { tasMps: 16, n: 1.41, level: 'normal', sustainedBandMps: [11.2, 21.7] } });
    const band = m.polylines.find((l) => l.name === 'band')!;
    expect(band.tone).toBe('ok');
    expect(band.dotEvery).toBeGreaterThan(1); // dotted: told apart from the solid n limit without colour
    const x = (v: number) => m.area.left + ((v - m.xMinMps) / (m.xMaxMps - m.xMinMps)) * (m.area.width - 1);
    const y = m.area.top + (1 - (1.41 - m.yMin) / (m.yMax - m.yMin)) * (m.area.height - 1);
    expect(band.points).toEqual([
      [Math.round(x(11.2)), Math.round(y)],
      [Math.round(x(21.7)), Math.round(y)],
    ]);
  });

  it('draws the band at n = 1 below level flight (the band is for max(1, n)), and none without a band', () => {
    const low = plot({ current: { tasMps: 16, n: 0.6, level: 'normal', sustainedBandMps: [9, 22] } });
    const one = plot({ current: { tasMps: 16, n: 1, level: 'normal', sustainedBandMps: [9, 22] } });
    expect(low.polylines.find((l) => l.name === 'band')!.points).toEqual(
      one.polylines.find((l) => l.name === 'band')!.points,
    );
    expect(
      plot({ current: { tasMps: 16, n: 3, level: 'normal', sustainedBandMps: null } }).polylines,
    ).not.toContainEqual(expect.objectContaining({ name: 'band' }));
  });

  it('marks the test point shown with its id at its target speed and load factor', () => {
    const m = plot({ target: { tasMps: 20, n: Math.SQRT2, id: 'P02' } });
    const label = m.texts.find((t) => t.text === '+P02')!;
    const x = m.area.left + ((20 - m.xMinMps) / (m.xMaxMps - m.xMinMps)) * (m.area.width - 1);
    const y = m.area.top + (1 - (Math.SQRT2 - m.yMin) / (m.yMax - m.yMin)) * (m.area.height - 1);
    expect(label.col).toBe(Math.floor(Math.round(x) / 2));
    expect(label.row).toBe(Math.floor(Math.round(y) / 4));
  });
});
