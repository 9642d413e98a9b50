import { describe, expect, it } from 'vitest';
import type { PlotPoint } from '../../src/core/flight-review.js';
import { LEVEL_MARKS, TONE_COLOURS } from '../../src/core/nv-plane.js';
import { buildPlotModel } from '../../src/dashboard/plot-model.js';
import { niceStep, renderNvPlotSvg, type NvPlotInput } from '../../src/report/nv-plot-svg.js';
import { exampleAirframe } from '../helpers/airframes.js';
import { checkXml, type XmlElement } from './xml-check.js';

const POINTS: PlotPoint[] = [
  { tasMps: 12, n: 1.0, level: 'normal' },
  { tasMps: 13, n: 1.2, level: 'normal' },
  { tasMps: 12, n: 1.55, level: 'caution' },
  { tasMps: 12, n: 1.75, level: 'warning' },
  { tasMps: 20, n: -1.3, level: 'caution' },
];

function render(name = 'Example airframe', more: Partial<NvPlotInput> = {}) {
  return renderNvPlotSvg({
    aircraft: exampleAirframe({ name }),
    densityKgM3: 1.225,
    massKg: 3.2,
    points: POINTS,
    pointsOf: 5,
    source: 'flight.ndjson',
    ...more,
  });
}

/** Pixel → value maps read from the tick labels of the plot. */
function axes(els: XmlElement[]): { speedAt: (px: number) => number; nAt: (px: number) => number } {
  const xTicks = els
    .filter((e) => e.name === 'text' && e.attributes['text-anchor'] === 'middle' && /^\d+(\.\d+)?$/.test(e.text))
    .map((e) => ({ pos: Number(e.attributes['x']), value: Number(e.text) }));
  const yTicks = els
    .filter((e) => e.name === 'text' && e.attributes['text-anchor'] === 'end' && /^-?\d+(\.\d+)?$/.test(e.text))
    .map((e) => ({ pos: Number(e.attributes['y']) - 4, value: Number(e.text) }));
  return { speedAt: axisFromTicks(xTicks), nAt: axisFromTicks(yTicks) };
}

function byId(elements: XmlElement[], id: string): XmlElement | undefined {
  return elements.find((e) => e.attributes['id'] === id);
}

/** The vertices of a path made of M/L commands. */
function vertices(d: string): Array<[number, number]> {
  return [...d.matchAll(/[ML]\s*(-?[\d.]+)[ ,](-?[\d.]+)/g)].map((m) => [Number(m[1]), Number(m[2])]);
}

/** Linear axis map from two tick labels: pixel → value. */
function axisFromTicks(ticks: Array<{ pos: number; value: number }>): (px: number) => number {
  const a = ticks[0]!;
  const b = ticks[ticks.length - 1]!;
  return (px) => a.value + ((px - a.pos) * (b.value - a.value)) / (b.pos - a.pos);
}

describe('n–V plot SVG', () => {
  it('is well-formed XML with an svg root in the SVG namespace', () => {
    const els = checkXml(render());
    expect(els[0]!.name).toBe('svg');
    expect(els[0]!.attributes['xmlns']).toBe('http://www.w3.org/2000/svg');
    expect(els[0]!.attributes['viewBox']).toMatch(/^0 0 \d+ \d+$/);
  });

  it('stays well-formed when the airframe name holds XML special characters', () => {
    const els = checkXml(render('Wing <A> & "B"'));
    expect(els.find((e) => e.name === 'title')!.text).toContain('Wing <A> & "B"');
  });

  it('holds the stall curve, the thrust-limited curve and the structural lines', () => {
    const els = checkXml(render());
    for (const id of [
      'stall-curve',
      'thrust-curve',
      'structural-limit',
      'structural-limit-negative',
      'stall-curve-negative',
    ]) {
      const path = byId(els, id);
      expect(path, id).toBeDefined();
      expect(vertices(path!.attributes['d']!).length, id).toBeGreaterThanOrEqual(2);
    }
  });

  it('draws the stall curve across the structural line at the corner speed (17.175 m/s for the example airframe)', () => {
    const els = checkXml(render());
    const xTicks = els
      .filter((e) => e.name === 'text' && e.attributes['text-anchor'] === 'middle' && /^\d+(\.\d+)?$/.test(e.text))
      .map((e) => ({ pos: Number(e.attributes['x']), value: Number(e.text) }));
    const speedAt = axisFromTicks(xTicks);
    const structureY = vertices(byId(els, 'structural-limit')!.attributes['d']!)[0]![1];
    const stall = vertices(byId(els, 'stall-curve')!.attributes['d']!);
    const i = stall.findIndex(([, y]) => y <= structureY); // SVG y grows downwards
    const [x0, y0] = stall[i - 1]!;
    const [x1, y1] = stall[i]!;
    const xCross = x0 + ((structureY - y0) * (x1 - x0)) / (y1 - y0);
    // Corner speed √(2·n_lim·W/(ρ·S·CLmax)) = 17.175 m/s (issue text's worked example; textbook relation)
    expect(speedAt(xCross)).toBeCloseTo(17.175, 0);
  });

  it('peaks the thrust-limited curve at the maximum sustained load factor (3.031 for the example airframe)', () => {
    const els = checkXml(render());
    const yTicks = els
      .filter((e) => e.name === 'text' && e.attributes['text-anchor'] === 'end' && /^-?\d+(\.\d+)?$/.test(e.text))
      .map((e) => ({ pos: Number(e.attributes['y']) - 4, value: Number(e.text) }));
    const nAt = axisFromTicks(yTicks);
    const thrust = vertices(byId(els, 'thrust-curve')!.attributes['d']!);
    const topY = Math.min(...thrust.map(([, y]) => y));
    // Issue text's worked example: max sustained n 3.031 at 15.34 m/s
    expect(nAt(topY)).toBeCloseTo(3.031, 1);
  });

  it('marks every point, by level with a different shape as well as a colour', () => {
    const els = checkXml(render());
    const group = (level: string) => els.find((e) => e.attributes['class'] === `points-${level}`)!;
    expect(group('normal').attributes['data-count']).toBe('2');
    expect(group('caution').attributes['data-count']).toBe('2');
    expect(group('warning').attributes['data-count']).toBe('1');
    const svg = render();
    const section = (level: string) => svg.split(`class="points-${level}"`)[1]!.split('</g>')[0]!;
    expect(section('normal').match(/<circle /g)).toHaveLength(2);
    expect(section('caution').match(/<path /g)).toHaveLength(2);
    expect(section('warning').match(/<rect /g)).toHaveLength(1);
  });

  it('labels the axes with units and carries a title, a legend and the advisory note', () => {
    const els = checkXml(render());
    expect(byId(els, 'x-label')!.text).toBe('True airspeed, TAS (m/s)');
    expect(byId(els, 'y-label')!.text).toBe('Load factor n (g)');
    const texts = els.filter((e) => e.name === 'text').map((e) => e.text);
    expect(texts.some((t) => t.startsWith('Load factor against airspeed — Example airframe'))).toBe(true);
    expect(texts.some((t) => t.includes('median density 1.2250 kg/m³'))).toBe(true);
    for (const word of [
      'Stall (CLmax)',
      'Thrust (sustained turn)',
      'Structure',
      'normal (circle) ×2',
      'caution (triangle) ×2',
      'warning (square) ×1',
    ]) {
      expect(texts, word).toContain(word);
    }
    expect(texts.some((t) => t.startsWith('Advisory only'))).toBe(true);
  });

  it('draws the stall caution and warning curves at the thresholds times the stall curve', () => {
    // An alert comes on where utilization = n / n_stall reaches its threshold (common practice), so the curves
    // are n_stall × 0.80 and × 0.90 at the example airframe's thresholds (the airframe file's defaults).
    const els = checkXml(render());
    const { nAt } = axes(els);
    const stall = vertices(byId(els, 'stall-curve')!.attributes['d']!);
    for (const [id, factor] of [
      ['stall-caution-curve', 0.8],
      ['stall-warning-curve', 0.9],
    ] as const) {
      const curve = vertices(byId(els, id)!.attributes['d']!);
      let compared = 0;
      for (const [x, y] of curve) {
        const same = stall.find(([sx]) => Math.abs(sx - x) < 1e-6);
        if (!same || y < 80 || same[1] < 80) continue; // both inside the plot, not at the clamp margin
        expect(nAt(y)).toBeCloseTo(factor * nAt(same[1]), 1);
        compared += 1;
      }
      expect(compared, id).toBeGreaterThan(20);
    }
  });

  it('marks Vs1 and the corner speed on the stall curve (8.811 and 17.175 m/s for the example airframe)', () => {
    // Issue text's worked example at sea level ISA, 3.2 kg: Vs1 = √(2W/(ρ·S·CLmax)) = 8.811 m/s, corner speed
    // Vs1·√n_limit = 17.175 m/s (textbook relations, Anderson ch. 6).
    const svg = render();
    const els = checkXml(svg);
    const { speedAt, nAt } = axes(els);
    const dot = (id: string) => {
      const start = els.findIndex((e) => e.attributes['id'] === id);
      return els.slice(start).find((e) => e.name === 'circle')!;
    };
    const vs1 = dot('vs1-mark');
    expect(speedAt(Number(vs1.attributes['cx']))).toBeCloseTo(8.811, 1);
    expect(nAt(Number(vs1.attributes['cy']))).toBeCloseTo(1, 1);
    const corner = dot('corner-mark');
    expect(speedAt(Number(corner.attributes['cx']))).toBeCloseTo(17.175, 1);
    expect(nAt(Number(corner.attributes['cy']))).toBeCloseTo(3.8, 1);
    expect(svg).toContain('Vs1 8.8');
    expect(svg).toContain('corner 17.2');
  });

  it('draws the thrust curve only where a level turn can be sustained (n_thrust ≥ 1), never a flat line at 0', () => {
    const els = checkXml(render());
    const { nAt } = axes(els);
    const thrust = vertices(byId(els, 'thrust-curve')!.attributes['d']!);
    for (const [, y] of thrust) expect(nAt(y)).toBeGreaterThanOrEqual(0.99);
    // 1.5 N of thrust is below the least drag of level flight, W·2·√(CD0·k) = 31.38 N × 0.0775 = 2.43 N
    // (minimum-drag relation of the parabolic polar, Anderson ch. 6, from memory): no thrust curve at all.
    const weak = renderNvPlotSvg({
      aircraft: exampleAirframe({ thrust: { model: 'constant', thrust_n: 1.5 } }),
      densityKgM3: 1.225,
      massKg: 3.2,
      points: [],
      pointsOf: 0,
      source: 'flight.ndjson',
    });
    expect(weak).not.toContain('id="thrust-curve"');
    expect(checkXml(weak).length).toBeGreaterThan(10);
  });

  it('draws V_NE at its true airspeed when it is known', () => {
    const els = checkXml(render('Example airframe', { vneTasMps: 33.4 }));
    const { speedAt } = axes(els);
    expect(speedAt(Number(byId(els, 'vne')!.attributes['x1']))).toBeCloseTo(33.4, 1);
    expect(els.some((e) => e.name === 'text' && e.text === 'V_NE 33.4 TAS')).toBe(true);
  });

  it('uses the colours and shapes of the dashboard for the same things', () => {
    const els = checkXml(render());
    const model = buildPlotModel({
      aircraft: exampleAirframe(),
      thresholds: exampleAirframe().thresholds,
      conditions: { densityKgM3: 1.225, massKg: 3.2 },
      trail: [],
      nowTS: null,
      current: { tasMps: 12, n: 1.75, level: 'warning' },
      stale: false,
      units: 'mps',
      cols: 60,
      rows: 20,
    });
    const tone = (name: string) => model.polylines.find((p) => p.name === name)!.tone as keyof typeof TONE_COLOURS;
    for (const [dashboardName, svgId] of [
      ['stall', 'stall-curve'],
      ['stall-caution', 'stall-caution-curve'],
      ['thrust', 'thrust-curve'],
      ['structure', 'structural-limit'],
    ] as const) {
      expect(byId(els, svgId)!.attributes['stroke'], svgId).toBe(TONE_COLOURS[tone(dashboardName)]);
    }
    // The dashboard's marker for a warning point has the warning tone; the SVG fills warning squares with it.
    expect(model.marker!.tone).toBe(LEVEL_MARKS.warning.tone);
    const warningSquare = render().split('class="points-warning"')[1]!.split('</g>')[0]!;
    expect(warningSquare).toContain(`fill="${TONE_COLOURS[LEVEL_MARKS.warning.tone]}"`);
  });

  it('chooses round tick steps', () => {
    expect(niceStep(35, 8)).toBe(5);
    expect(niceStep(8, 8)).toBe(1);
    expect(niceStep(1.2, 8)).toBe(0.2);
  });
});

describe('the XML check used above', () => {
  it('rejects unbalanced tags, bad entities and bare ampersands', () => {
    expect(() => checkXml('<a><b></a>')).toThrow();
    expect(() => checkXml('<a>x & y</a>')).toThrow();
    expect(() => checkXml('<a t="1" t="2"/>')).toThrow();
    expect(() => checkXml('<a/><b/>')).toThrow();
    expect(checkXml('<a x="&amp;"><b/>text &lt;</a>')).toHaveLength(2);
  });
});
