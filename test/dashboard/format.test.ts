import { describe, expect, it } from 'vitest';
import { closestLimit, describeAlert, limitLevel, newWarnings } from '../../src/dashboard/format-alert.js';
import {
  BAR_EMPTY,
  BAR_FILLED,
  BAR_MARK_CAUTION,
  BAR_MARK_FILLED,
  BAR_MARK_WARNING,
  BAR_OVERFLOW,
  barFilledCells,
  barMarkIndex,
  buildUtilizationBar,
} from '../../src/dashboard/format-bars.js';
import { colorAllowed, escapeTags, fitLine, lineText, renderLine, seg } from '../../src/dashboard/format-tags.js';
import {
  fitPathTail,
  fitText,
  formatAge,
  formatBytes,
  formatClock,
  formatFixed,
  formatPercent,
  formatSigned,
  formatSpeed,
  nextSpeedUnit,
  speedFromMps,
  speedToMps,
} from '../../src/dashboard/format-units.js';
import { steadyRecord } from './records.js';

describe('speed units', () => {
  it('converts with the exact definitions: 1 kt = 1852/3600 m/s, 1 km/h = 1000/3600 m/s', () => {
    // International nautical mile, 1852 m (exact by definition; NIST SP 811, appendix B).
    expect(formatSpeed((100 * 1852) / 3600, 'kt')).toBe('100.0 kt');
    expect(formatSpeed(10, 'kmh')).toBe('36 km/h');
    expect(formatSpeed(17.25, 'mps')).toBe('17.3 m/s');
    expect(speedToMps(speedFromMps(23.4, 'kt'), 'kt')).toBeCloseTo(23.4, 12);
  });

  it('cycles m/s → kt → km/h → m/s on the u key', () => {
    expect(nextSpeedUnit('mps')).toBe('kt');
    expect(nextSpeedUnit('kt')).toBe('kmh');
    expect(nextSpeedUnit('kmh')).toBe('mps');
  });

  it('shows a dash with the unit when there is no value', () => {
    expect(formatSpeed(null, 'kt')).toBe('— kt');
    expect(formatSpeed(Number.NaN, 'mps')).toBe('— m/s');
  });
});

describe('numbers', () => {
  it('signs margins with a true minus and never shows minus zero', () => {
    expect(formatSigned(0.543, 2)).toBe('+0.54');
    expect(formatSigned(-0.12, 2)).toBe('−0.12');
    expect(formatSigned(-0.001, 2)).toBe('0.00');
    expect(formatFixed(-0.04, 1)).toBe('0.0');
    expect(formatSigned(null, 2)).toBe('—');
  });

  it('formats utilization as whole percent', () => {
    expect(formatPercent(0.723)).toBe('72 %');
    expect(formatPercent(1.004)).toBe('100 %');
    expect(formatPercent(null)).toBe('— %');
  });

  it('formats flight time as m:ss.s and carries 59.96 s to the next minute', () => {
    expect(formatClock(65.3)).toBe('1:05.3');
    expect(formatClock(59.96)).toBe('1:00.0');
    expect(formatClock(0)).toBe('0:00.0');
    expect(formatClock(3725)).toBe('1:02:05');
  });

  it('formats the age of the last frame and the recording size', () => {
    expect(formatAge(0.02)).toBe('0.02 s');
    expect(formatAge(3.42)).toBe('3.4 s');
    expect(formatAge(125)).toBe('2 min 5 s');
    expect(formatBytes(999)).toBe('999 B');
    expect(formatBytes(1_234_567)).toBe('1.23 MB');
    expect(formatBytes(45_600)).toBe('45.6 kB');
  });

  it('cuts text with an ellipsis and keeps the tail of a path', () => {
    expect(fitText('abcdef', 4)).toBe('abc…');
    expect(fitText('ab', 4)).toBe('ab  ');
    expect(fitPathTail('/var/log/flights/today.rec', 12)).toBe('…s/today.rec');
  });
});

describe('styled lines and NO_COLOR', () => {
  const line = [
    seg('WARNING', 'warning'),
    seg(' stall '),
    seg('CAUTION', 'caution'),
    seg(' STALE', 'stale'),
    seg(' banner', 'banner-warning'),
  ];

  it('colours warning red and caution yellow when colour is allowed', () => {
    const text = renderLine(line, { color: true });
    expect(text).toContain('{red-fg}{bold}WARNING');
    expect(text).toContain('{yellow-fg}{bold}CAUTION');
    expect(text).toContain('{red-bg}');
  });

  it('uses no colour at all without it, and the words still carry the state', () => {
    const text = renderLine(line, { color: false });
    expect(text).not.toMatch(/-(fg|bg)\}/);
    expect(text.replace(/\{\/?[a-z]+\}/g, '')).toBe('WARNING stall CAUTION STALE banner');
  });

  it('honours NO_COLOR when set to any non-empty value (no-color.org)', () => {
    expect(colorAllowed({ NO_COLOR: '1' })).toBe(false);
    expect(colorAllowed({ NO_COLOR: '' })).toBe(true);
    expect(colorAllowed({})).toBe(true);
  });

  it('escapes braces in literal text so a file name cannot inject tags', () => {
    expect(escapeTags('a{red-fg}b')).toBe('a{open}red-fg{close}b');
    expect(renderLine([seg('{x}')], { color: true })).toBe('{open}x{close}');
  });

  it('pads or cuts a line to an exact width', () => {
    expect(lineText(fitLine([seg('abc'), seg('def', 'dim')], 5))).toBe('abcd…');
    expect(lineText(fitLine([seg('ab')], 4))).toBe('ab  ');
  });
});

describe('utilization bars', () => {
  const text = (l: ReturnType<typeof buildUtilizationBar>): string => lineText(l);

  it('fills in proportion to utilization over 0 … 125 % and marks both thresholds', () => {
    // 20 cells over 0…1.25 is 0.0625 per cell: 0.5 fills 8 cells; 0.8 falls in cell 12 (0.75…0.8125), 0.9 in cell 14.
    const bar = buildUtilizationBar({ utilization: 0.5, cautionAt: 0.8, warningAt: 0.9, width: 20 });
    expect(barFilledCells(0.5, 20)).toBe(8);
    expect(barMarkIndex(0.8, 20)).toBe(12);
    expect(barMarkIndex(0.9, 20)).toBe(14);
    expect(text(bar)).toBe(
      BAR_FILLED.repeat(8) +
        BAR_EMPTY.repeat(4) +
        BAR_MARK_CAUTION +
        BAR_EMPTY +
        BAR_MARK_WARNING +
        BAR_EMPTY.repeat(5),
    );
  });

  it('keeps the marks visible as notches once the bar has passed them', () => {
    const bar = text(buildUtilizationBar({ utilization: 0.95, cautionAt: 0.8, warningAt: 0.9, width: 20 }));
    expect(bar[12]).toBe(BAR_MARK_FILLED);
    expect(bar[14]).toBe(BAR_MARK_FILLED);
    expect(bar.slice(0, 15).includes(BAR_EMPTY)).toBe(false);
  });

  it('colours the filled cells by the zone they are in', () => {
    const bar = buildUtilizationBar({ utilization: 1.0, cautionAt: 0.8, warningAt: 0.9, width: 20 });
    expect(bar.map((s) => s.tone)).toEqual(['ok', 'caution', 'warning', 'dim']);
  });

  it('shows an overflow mark past the end of the scale', () => {
    const bar = text(buildUtilizationBar({ utilization: 2.4, cautionAt: 1.0, warningAt: null, width: 10 }));
    expect(bar.endsWith(BAR_OVERFLOW)).toBe(true);
    expect(bar).not.toContain(BAR_MARK_WARNING);
  });

  it('draws an empty bar with its marks when the limit is undefined', () => {
    const bar = text(buildUtilizationBar({ utilization: null, cautionAt: 1.0, warningAt: null, width: 10 }));
    expect(bar).toBe(BAR_EMPTY.repeat(8) + BAR_MARK_CAUTION + BAR_EMPTY);
  });
});

describe('alert words', () => {
  it('names the highest level per limit and the closest limit', () => {
    const rec = steadyRecord({ tasMps: 12.3, altM: 123, bankDeg: 56 });
    expect(limitLevel(rec.alerts, 'stall')).toBe('warning');
    expect(limitLevel(rec.alerts, 'structure')).toBeNull();
    expect(closestLimit(rec)?.limit).toBe('stall');
    expect(describeAlert(rec, 'stall')).toMatch(/^STALL \d+ %$/);
  });

  it('rings only for a warning that was not on before', () => {
    expect(newWarnings([], [{ limit: 'stall', level: 'warning' }])).toEqual(['stall']);
    expect(newWarnings([{ limit: 'stall', level: 'warning' }], [{ limit: 'stall', level: 'warning' }])).toEqual([]);
    expect(newWarnings([{ limit: 'stall', level: 'caution' }], [{ limit: 'structure', level: 'caution' }])).toEqual([]);
  });
});
