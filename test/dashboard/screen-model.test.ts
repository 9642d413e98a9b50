import { describe, expect, it } from 'vitest';
import { lineText, renderLines, type Line } from '../../src/dashboard/format-tags.js';
import { innerSize } from '../../src/dashboard/layout.js';
import {
  STALE_AFTER_S,
  buildScreenModel,
  isStale,
  loadFactorMargin,
  type ScreenModel,
} from '../../src/dashboard/screen-model.js';
import type { LimitEvent } from '../../src/core/events.js';
import type { CardPoint } from '../../src/core/card.js';
import { createFrameEngine } from '../../src/core/frame-engine.js';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { createLiveCard, type LiveCardView } from '../../src/dashboard/live-card.js';
import {
  AIRCRAFT,
  LAYOUT_120x40,
  LAYOUT_120x40_CARD,
  LAYOUT_80x24,
  LAYOUT_80x24_CARD,
  event,
  link,
  screenInput,
  steadyRecord,
} from './records.js';

const text = (lines: Line[]): string => lines.map(lineText).join('\n');

// A steady level turn at 20 m/s TAS, 45° bank, 100 m: well inside the example airframe's envelope.
const turn45 = steadyRecord({ tasMps: 20, altM: 100, bankDeg: 45 });
// Slow and steep: 12.3 m/s at 56° bank, past the stall warning threshold (utilization ≈ 0.93).
const slowSteep = steadyRecord({ tasMps: 12.3, altM: 123, bankDeg: 56 });
// 52° bank at the same speed: stall caution only (utilization ≈ 0.84).
const slowCaution = steadyRecord({ tasMps: 12.3, altM: 123, bankDeg: 52 });

describe('readouts', () => {
  const model = buildScreenModel(screenInput({ record: turn45 }), LAYOUT_120x40);
  const readouts = text(model.readouts.lines);

  it('show the frame: TAS, EAS, altitude, density and bank', () => {
    expect(readouts).toContain('TAS  20.0 m/s');
    expect(readouts).toMatch(/EAS {2}19\.9 m\/s/);
    expect(readouts).toContain('alt  100 m');
    expect(readouts).toMatch(/ρ {4}1\.213 kg\/m³/); // ISA at 100 m: 1.2133 kg/m³ (U.S. Standard Atmosphere 1976)
    expect(readouts).toContain('bank 45.0°');
  });

  it('compare n with 1/cos(bank) and flag the turn coordinated', () => {
    // 45° bank → n = 1.414 (FAA-H-8083-25, load factor chart).
    expect(readouts).toMatch(/n {4}1\.41 vs 1\/cos φ 1\.41 +coordinated/);
  });

  it('give turn rate and radius of the level turn', () => {
    // ω = g·tan φ / V and R = V²/(g·tan φ) (Anderson, Aircraft Performance and Design, ch. 6):
    // at 20 m/s and 45°: ω = 9.80665/20 rad/s = 28.09 °/s, R = 400/9.80665 = 40.8 m.
    expect(readouts).toContain('rate 28.1 °/s');
    expect(readouts).toContain('radius 41 m');
  });

  it('give the bank limit and the sustained bank limit from the record', () => {
    expect(readouts).toContain(`bank limit ${turn45.bank_limit_deg.toFixed(0)}°`);
    expect(readouts).toContain(`sustained ${turn45.bank_sustained_deg!.toFixed(0)}°`);
  });

  it('switch the speeds to knots', () => {
    const kt = text(buildScreenModel(screenInput({ record: turn45, units: 'kt' }), LAYOUT_120x40).readouts.lines);
    // 20 m/s = 20 × 3600/1852 kt = 38.88 kt (exact knot definition).
    expect(kt).toContain('TAS  38.9 kt');
  });

  it('flag an uncoordinated turn in words', () => {
    const rec = { ...turn45, uncoordinated: true };
    expect(text(buildScreenModel(screenInput({ record: rec }), LAYOUT_120x40).readouts.lines)).toContain(
      'UNCOORDINATED',
    );
    expect(text(buildScreenModel(screenInput({ record: rec }), LAYOUT_80x24).readouts.lines)).toContain('UNCOORD');
  });
});

describe('alert banner and margins', () => {
  it('says NORMAL and names the closest limit when inside the envelope', () => {
    const model = buildScreenModel(screenInput({ record: turn45 }), LAYOUT_80x24);
    expect(text(model.banner)).toMatch(/NORMAL — inside the envelope · closest: \w+ \d+ %/);
    expect(model.banner[0]![0]!.tone).toBe('banner-normal');
  });

  it('says CAUTION with the limit, in words and in amber', () => {
    expect(slowCaution.level).toBe('caution');
    const model = buildScreenModel(screenInput({ record: slowCaution }), LAYOUT_80x24);
    expect(text(model.banner)).toMatch(/CAUTION STALL \d+ %/);
    expect(model.banner[0]![0]!.tone).toBe('banner-caution');
    const stallLine = lineText(model.margins.lines[0]!);
    expect(stallLine).toMatch(/^Stall +\d+ % +Δn \+\d\.\d\d +CAUTION$/);
  });

  it('says WARNING with the limit in red, and the stall margins in Δn and speed', () => {
    expect(slowSteep.level).toBe('warning');
    const model = buildScreenModel(screenInput({ record: slowSteep }), LAYOUT_80x24);
    expect(text(model.banner)).toMatch(/▲ WARNING ▲ STALL 93 %/);
    expect(model.banner[0]![0]!.tone).toBe('banner-warning');
    const margins = text(model.margins.lines);
    expect(margins).toContain('WARNING');
    // Δn to the stall = n_stall − n; speed margin from the record (TAS over the stall speed at this n).
    expect(margins).toContain(`Δn +${(slowSteep.n_stall - slowSteep.n_measured).toFixed(2)}`);
    expect(margins).toContain(`V +${slowSteep.stall_speed_margin_pct!.toFixed(0)} %`);
    expect(model.margins.tone).toBe('warning');
  });

  it('keeps the state readable without colour (NO_COLOR)', () => {
    const model = buildScreenModel(screenInput({ record: slowSteep }), LAYOUT_80x24);
    const mono = renderLines([...model.banner, ...model.margins.lines], { color: false });
    expect(mono).not.toMatch(/-(fg|bg)\}/);
    expect(mono).toContain('WARNING');
    expect(mono).toContain('STALL');
  });

  it('computes Δn against the negative limits when n is negative', () => {
    const neg = { ...turn45, n_measured: -0.5 };
    expect(loadFactorMargin(neg, 'structure')).toBeCloseTo(-0.5 - AIRCRAFT.nLimitNeg, 12);
    expect(loadFactorMargin(neg, 'stall')).toBeCloseTo(-0.5 - neg.n_stall_neg!, 12);
  });

  it('says NOT FLYING below half the stall speed, and WAITING before the first frame', () => {
    const ground = steadyRecord({ tasMps: 2, altM: 0, bankDeg: 0 });
    expect(ground.flying).toBe(false);
    expect(text(buildScreenModel(screenInput({ record: ground }), LAYOUT_80x24).banner)).toContain('NOT FLYING');
    expect(text(buildScreenModel(screenInput({ record: null, ageS: null }), LAYOUT_80x24).banner)).toContain(
      'WAITING FOR DATA',
    );
  });

  it('shows that the bell is muted and the replay paused', () => {
    const model = buildScreenModel(
      screenInput({
        record: turn45,
        muted: true,
        isReplay: true,
        replay: { positionS: 3, lengthS: 9, speed: 1, paused: true },
      }),
      LAYOUT_80x24,
    );
    expect(text(model.banner)).toContain('[PAUSED · bell muted]');
  });
});

describe('stale data', () => {
  it(`is stale after ${STALE_AFTER_S} s without a frame, not before`, () => {
    expect(isStale({ record: turn45, ageS: 0.9, replay: null, link: link() })).toBe(false);
    expect(isStale({ record: turn45, ageS: 1.2, replay: null, link: link() })).toBe(true);
  });

  it('is stale when the link says stale or lost, whatever the age', () => {
    expect(isStale({ record: turn45, ageS: 0.1, replay: null, link: link({ state: 'lost' }) })).toBe(true);
    expect(isStale({ record: turn45, ageS: 0.1, replay: null, link: link({ state: 'stale' }) })).toBe(true);
  });

  it('is not stale while a replay is paused on purpose, and the link says PAUSED', () => {
    const input = screenInput({
      record: turn45,
      ageS: 30,
      isReplay: true,
      link: link({ state: 'stale' }),
      replay: { positionS: 3, lengthS: 9, speed: 1, paused: true },
    });
    expect(isStale(input)).toBe(false);
    expect(lineText(buildScreenModel(input, LAYOUT_80x24).link.lines[0]!)).toMatch(/^PAUSED /);
  });

  it('marks the banner, the readouts and every margin STALE', () => {
    const model = buildScreenModel(screenInput({ record: slowSteep, ageS: 3.4 }), LAYOUT_120x40);
    expect(model.stale).toBe(true);
    expect(text(model.banner)).toMatch(/STALE DATA — no frame for 3\.4 s · last: WARNING/);
    expect(model.banner[0]![0]!.tone).toBe('banner-stale');
    expect(model.readouts.title).toBe('Readouts — STALE 3.4 s · t 0:02.0'); // t of the last frame
    expect(text(model.readouts.lines)).toContain('STALE — last frame 3.4 s ago');
    // Stall, structure, thrust (name line then bar line) and the speed line.
    const words = model.margins.lines.filter((_, i) => i % 2 === 0).map((l) => lineText(l).trim().split(' ').pop());
    expect(words).toEqual(['STALE', 'STALE', 'STALE', 'STALE']);
    expect(
      model.readouts.lines
        .flat()
        .filter((s) => /\d/.test(s.text) && s.tone !== 'dim')
        .every((s) => s.tone === 'stale'),
    ).toBe(true);
  });
});

describe('link, replay and event log', () => {
  it('shows state, frames/s, rejected lines, age of the last frame and the recording', () => {
    const model = buildScreenModel(
      screenInput({
        record: turn45,
        link: link({ recordingFile: '/data/flights/today.rec', recordingBytes: 1_234_567 }),
      }),
      LAYOUT_120x40,
    );
    const lines = text(model.link.lines);
    expect(lines).toContain('LIVE 20.0 fr/s rej 2 last 0.05 s');
    expect(lines).toContain('rec /data/flights/today.rec 1.23 MB');
    expect(lines).toContain('time not increasing');
    expect(model.link.title).toBe('Link: file flight.ndjson');
  });

  it('says why the link was lost', () => {
    const model = buildScreenModel(
      screenInput({
        record: turn45,
        link: link({ state: 'lost', stateDetail: 'connect ECONNREFUSED 127.0.0.1:8765' }),
      }),
      LAYOUT_120x40,
    );
    const lines = text(model.link.lines);
    expect(lines).toContain('LOST');
    expect(lines).toContain('why connect ECONNREFUSED 127.0.0.1:8765');
  });

  it('says a replay at its end is at the end, not playing', () => {
    const model = buildScreenModel(
      screenInput({
        record: turn45,
        isReplay: true,
        link: link({ state: 'ended' }),
        replay: { positionS: 92, lengthS: 92, speed: 1, paused: false },
      }),
      LAYOUT_80x24,
    );
    const lines = text(model.link.lines);
    expect(lines).toContain('×1 at end');
    expect(lines).not.toContain('playing');
  });

  it('shows a recording error as a warning', () => {
    const model = buildScreenModel(
      screenInput({ record: turn45, link: link({ recordingFile: 'x.rec', recordingError: 'disk full' }) }),
      LAYOUT_80x24,
    );
    const line = model.link.lines[1]!;
    expect(lineText(line)).toContain('REC ERROR disk full');
    expect(line[0]!.tone).toBe('warning');
  });

  it('shows replay position, length, speed and pause', () => {
    const model = buildScreenModel(
      screenInput({
        record: turn45,
        isReplay: true,
        replay: { positionS: 12, lengthS: 92, speed: 0.5, paused: false },
      }),
      LAYOUT_80x24,
    );
    expect(text(model.link.lines)).toContain('replay 0:12.0/1:32.0 ×0.5 playing');
  });

  it('lists exceedances newest first with time, limit, level, duration, peak and what ended them', () => {
    const events = [
      event(),
      event({
        limit: 'thrust',
        start_s: 30,
        duration_s: 4.9,
        peak_utilization: 1.5,
        speed_at_peak_mps: 20.8,
        ended_by: 'data_gap',
      }),
      event({ level: 'warning', start_s: 31, open: true, peak_utilization: 0.93 }),
    ];
    const model = buildScreenModel(screenInput({ record: turn45, events }), LAYOUT_120x40);
    const lines = model.events.lines.map(lineText).map((l) => l.trimEnd());
    expect(lines[1]).toMatch(/^ 0:31\.0 STALL +WARNING +ON NOW +93 % 12\.4 m\/s$/);
    expect(lines[2]).toMatch(/^ 0:30\.0 THRUST +CAUTION +4\.9 s +150 % 20\.8 m\/s +data lost \(gap\)$/);
    expect(lines[3]).toMatch(/^ 0:12\.5 STALL +CAUTION +1\.5 s +86 % 12\.4 m\/s +cleared$/);
    expect(model.events.title).toBe('Exceedances (3)');
    expect(model.events.tone).toBe('warning');
  });

  it('keeps the speed at the peak and how each event ended in the 80×24 list', () => {
    const events = [
      event({
        limit: 'structure',
        start_s: 75.3,
        duration_s: 2.25,
        peak_utilization: 0.97,
        speed_at_peak_mps: 24.4,
        ended_by: 'data_gap',
      } as Partial<LimitEvent>),
      event({ start_s: 80, open: true, peak_utilization: 0.93, speed_at_peak_mps: 12.4 }),
      event({ start_s: 12.5, ended_by: 'cleared' } as Partial<LimitEvent>),
    ];
    const model = buildScreenModel(screenInput({ record: turn45, events }), LAYOUT_80x24);
    const width = innerSize(LAYOUT_80x24.events).width;
    const lines = model.events.lines.map(lineText).map((l) => l.trimEnd());
    for (const l of lines) expect(Array.from(l).length).toBeLessThanOrEqual(width);
    expect(lines[0]).toMatch(/m\/s ended$/);
    expect(lines[1]).toMatch(/^ 1:20 STALL +CAUT +ON +93% +12\.4$/);
    expect(lines[2]).toMatch(/^ 1:15 STRUCT WARN|^ 1:15 STRUCT CAUT/);
    expect(lines[2]).toMatch(/2\.3s +97% +24\.4 gap$/);
    expect(lines[3]).toMatch(/1\.5s +86% +12\.4 clear$/);
  });

  it('says in words how an event ended on a wide screen', () => {
    const events = [
      event({ ended_by: 'link_lost' } as Partial<LimitEvent>),
      event({ start_s: 1, ended_by: 'seek' } as Partial<LimitEvent>),
    ];
    const lines = buildScreenModel(screenInput({ record: turn45, events }), LAYOUT_120x40).events.lines.map(lineText);
    expect(lines[1]).toMatch(/12\.4 m\/s +link lost/);
    expect(lines[2]).toMatch(/replay seek/);
  });

  it('says REPLAY, not LIVE, in the link panel of a replay', () => {
    const live = buildScreenModel(screenInput({ record: turn45 }), LAYOUT_80x24);
    const replay = buildScreenModel(
      screenInput({ record: turn45, isReplay: true, replay: { positionS: 12, lengthS: 92, speed: 1, paused: false } }),
      LAYOUT_80x24,
    );
    expect(lineText(live.link.lines[0]!)).toMatch(/^LIVE /);
    expect(lineText(replay.link.lines[0]!)).toMatch(/^REPLAY /);
    expect(text(replay.link.lines)).not.toContain('LIVE');
  });

  it('marks simulated data in the banner, whatever the alert state', () => {
    for (const record of [turn45, slowSteep]) {
      const model = buildScreenModel(screenInput({ record, simulated: true }), LAYOUT_80x24);
      expect(text(model.banner)).toMatch(/^ *SIMULATED DATA · (NORMAL|▲ WARNING)/);
    }
    expect(text(buildScreenModel(screenInput({ record: turn45 }), LAYOUT_80x24).banner)).not.toContain('SIMULATED');
  });

  it('gives the stall speed as TAS and as CAS', () => {
    // CAS/TAS scales as √(ρ/ρ0) at low Mach (standard subsonic relations, REFERENCES.md); the record's ratio is used.
    const rec = { ...turn45, cas_mps: turn45.tas_mps * 0.95 } as typeof turn45;
    const lines = text(buildScreenModel(screenInput({ record: rec }), LAYOUT_80x24).readouts.lines);
    const tas = turn45.stall_speed_mps!;
    expect(lines).toContain(`stall V TAS ${tas.toFixed(1)} m/s  CAS ${(tas * 0.95).toFixed(1)} m/s`);
  });

  it('shows an error from the caller at the top of the log', () => {
    const model = buildScreenModel(
      screenInput({ record: turn45, error: 'recording stopped: disk full' }),
      LAYOUT_80x24,
    );
    expect(lineText(model.events.lines[0]!)).toContain('ERROR recording stopped: disk full');
  });
});

describe('keys and layout fit', () => {
  it('shows the transport keys only for a replay, and always ? q m u c', () => {
    const live = lineText(buildScreenModel(screenInput(), LAYOUT_120x40).keys);
    const replay = lineText(buildScreenModel(screenInput({ isReplay: true }), LAYOUT_120x40).keys);
    for (const k of ['? keys', 'q quit', 'm mute', 'u units', 'c clear']) {
      expect(live).toContain(k);
      expect(replay).toContain(k);
    }
    expect(live).not.toContain('space pause');
    expect(replay).toContain('space pause');
    expect(replay).toContain('← → seek');
  });

  it('shows the advisory caution line', () => {
    expect(lineText(buildScreenModel(screenInput(), LAYOUT_80x24).caution)).toMatch(
      /^Advisory only.*approved limits prevail\./,
    );
  });

  for (const layout of [LAYOUT_80x24, LAYOUT_120x40]) {
    it(`fits every line in its panel at ${layout.cols}×${layout.rows}`, () => {
      const input = screenInput({
        record: slowSteep,
        ageS: 2,
        isReplay: true,
        replay: { positionS: 3725, lengthS: 7200, speed: 0.25, paused: false },
        events: Array.from({ length: 20 }, (_, i) => event({ start_s: i * 10 })),
        link: link({ recordingFile: '/a/very/long/path/to/some/flight/recording/file-name.rec', recordingBytes: 9e9 }),
        error: 'x'.repeat(300),
      });
      const model: ScreenModel = buildScreenModel(input, layout);
      const check = (lines: Line[], width: number, height: number): void => {
        expect(lines.length).toBeLessThanOrEqual(height);
        for (const l of lines) expect(Array.from(lineText(l)).length).toBeLessThanOrEqual(width);
      };
      check(model.margins.lines, innerSize(layout.margins).width, innerSize(layout.margins).height);
      check(model.readouts.lines, innerSize(layout.readouts).width, innerSize(layout.readouts).height);
      check(model.link.lines, innerSize(layout.link).width, innerSize(layout.link).height);
      check(model.events.lines, innerSize(layout.events).width, innerSize(layout.events).height);
      check(model.help, innerSize(layout.help).width, innerSize(layout.help).height);
      check(model.banner, layout.cols, layout.banner.height);
      check([model.keys, model.caution], layout.cols, 2);
      // blessed draws a label from column 2 with a space each side: title + 2 must end before the corner.
      for (const [title, rect] of [
        [model.margins.title, layout.margins],
        [model.readouts.title, layout.readouts],
        [model.link.title, layout.link],
        [model.events.title, layout.events],
        [model.plotTitle, layout.plot],
      ] as const) {
        expect(Array.from(title).length).toBeLessThanOrEqual(rect.width - 6);
      }
    });
  }

  it('asks for a bigger terminal below 80×24', () => {
    const model = buildScreenModel(screenInput(), { ...LAYOUT_80x24, ...{ tooSmall: true, cols: 70, rows: 20 } });
    expect(text(model.tooSmall!)).toContain('needs at least 80×24; this terminal is 70×20');
  });
});

describe('the test point panel (--card)', () => {
  // A 45° level turn at 20 m/s: n = 1.414 (FAA-H-8083-25, load factor chart).
  const p45: CardPoint = {
    id: 'P02',
    step: 0.5,
    tas_mps: 20,
    bank_deg: 45,
    load_factor: Math.SQRT2,
    hold_s: 3,
    tolerance: { bank_deg: 3, tas_mps: 1 },
    predicted: { utilization: { stall: 0.3, thrust: 0.6, structure: 0.37 }, sustained: true, dvdt_mps2: 0.4 },
  };
  const p30: CardPoint = { ...p45, id: 'P01', bank_deg: 30, load_factor: 1 / Math.cos(Math.PI / 6) };
  /** A card of two points followed through the records given; P01 is flown first so that P02 is shown. */
  const followed = (records: Array<[number, number, number]>): LiveCardView => {
    const card = createLiveCard([p30, p45], 'card.json');
    for (let i = 0; i <= 62; i++) card.push({ ...turn45, t_s: i * 0.05, bank_deg: 30, tas_mps: 20 });
    for (const [t, bank, tas] of records) card.push({ ...turn45, t_s: t, bank_deg: bank, tas_mps: tas });
    return card.view();
  };
  const holding = followed(
    Array.from({ length: 43 }, (_, i) => [10 + i * 0.05, 44.1, 20.4] as [number, number, number]),
  );

  for (const layout of [LAYOUT_80x24_CARD, LAYOUT_120x40_CARD]) {
    it(`shows the point, its targets, the deviation from each and the hold timer, fitting at ${layout.cols}×${layout.rows}`, () => {
      const model = buildScreenModel(screenInput({ record: turn45, card: holding }), layout);
      const panel = model.card!;
      const inner = innerSize(layout.card);
      expect(panel.lines.length).toBeLessThanOrEqual(inner.height);
      for (const l of panel.lines) expect(Array.from(lineText(l)).length).toBeLessThanOrEqual(inner.width);
      expect(Array.from(panel.title).length).toBeLessThanOrEqual(layout.card.width - 6);
      expect(panel.title).toBe('Test point P02 · 1/2 achieved');
      const body = text(panel.lines);
      expect(body).toMatch(/bank 45\.0°/);
      expect(body).toMatch(/Δ −0\.9°/); // |44.1| − 45
      expect(body).toMatch(/TAS +20\.0/);
      expect(body).toMatch(/Δ \+0\.4/); // 20.4 − 20
      expect(body).toContain('held 2.1 of 3.0 s');
      expect(body).toMatch(/✓▸~$/m); // P01 achieved, P02 shown and held in part so far
      // Both deviations within tolerance: in the "ok" tone.
      const tones = panel.lines
        .flat()
        .filter((s) => /^[−+]0\.[49]/.test(s.text))
        .map((s) => s.tone);
      expect(tones).toEqual(['ok', 'ok']);
    });
  }

  it('says a point is not held, with the best hold so far, and marks a deviation outside its tolerance', () => {
    const v = followed([
      [10, 45, 20],
      [10.5, 45, 20],
      [11, 49.5, 20],
    ]);
    const panel = buildScreenModel(screenInput({ record: turn45, card: v }), LAYOUT_80x24_CARD).card!;
    const body = text(panel.lines);
    expect(body).toContain('not held · best 0.5 of 3.0 s');
    expect(body).toMatch(/Δ \+4\.5°/);
    expect(panel.lines.flat().find((s) => s.text === '+4.5°')!.tone).toBe('caution');
  });

  it('says ACHIEVED for a point achieved, and counts the points achieved in the title', () => {
    const card = createLiveCard([p30, p45], 'card.json');
    for (let i = 0; i <= 62; i++) card.push({ ...turn45, t_s: i * 0.05, bank_deg: 30, tas_mps: 20 });
    expect(card.view().point.id).toBe('P02'); // moved on
    card.step(-1); // back to P01
    const panel = buildScreenModel(screenInput({ record: turn45, card: card.view() }), LAYOUT_80x24_CARD).card!;
    expect(panel.title).toBe('Test point P01 · 1/2 achieved');
    expect(text(panel.lines)).toMatch(/held 3\.1 of 3\.0 s ACHIEVED/);
  });

  it('keeps the row of marks at 80×24 beside a long hold text, and shows the stretch around the point of a long card', () => {
    const cardOf = (count: number): CardPoint[] =>
      Array.from({ length: count }, (_, i) => ({
        ...(i === 0 ? p30 : p45),
        id: `P${String(i + 1).padStart(2, '0')}`,
      }));
    const width = innerSize(LAYOUT_80x24_CARD.card).width;
    const holdLineOf = (points: CardPoint[], shown: number): string => {
      const card = createLiveCard(points, 'card.json');
      // 0.5 s at P01's 30°: held in part, so P01 stays the point shown with its best hold.
      for (let i = 0; i <= 10; i++) card.push({ ...turn45, t_s: i * 0.05, bank_deg: 30, tas_mps: 20 });
      card.push({ ...turn45, t_s: 0.6, bank_deg: 0, tas_mps: 20 });
      for (let i = 0; i < shown; i++) card.step(1);
      const panel = buildScreenModel(screenInput({ record: turn45, card: card.view() }), LAYOUT_80x24_CARD).card!;
      for (const l of panel.lines) expect(Array.from(lineText(l)).length).toBeLessThanOrEqual(width);
      return lineText(panel.lines.at(-1)!);
    };
    // The default card of `card` has 14 points: beside "not held · best 0.5 of 3.0 s" the row used to vanish; now
    // it shows the first points, P01 marked as shown and held in part, and … for the rest.
    const fourteen = holdLineOf(cardOf(14), 0);
    expect(fourteen).toContain('not held · best 0.5 of 3.0 s');
    expect(fourteen).toMatch(/ ▸~·{3,}…$/);
    // Beside a short hold text the whole row fits: the two points of a shorter card.
    expect(holdLineOf(cardOf(2), 1)).toMatch(/ ~▸·$/);
    // 40 points: the stretch around the point shown (P21), the points left out marked with … at each end.
    const forty = holdLineOf(cardOf(40), 20);
    expect(forty).toMatch(/ …·+▸·+…$/);
    const marks = forty.slice(forty.indexOf('…'));
    expect(Array.from(marks).length).toBeLessThan(40);
  });

  it('gives the speed deviation in the chosen units', () => {
    const model = buildScreenModel(screenInput({ record: turn45, card: holding, units: 'kt' }), LAYOUT_80x24_CARD);
    // 20 m/s = 38.9 kt and 0.4 m/s = 0.78 kt (exact knot definition, 1852 m per hour).
    expect(text(model.card!.lines)).toMatch(/TAS 38\.9 Δ \+0\.8 kt/);
  });

  it('lists n p among the keys only with a card, and the keys still fit 80 columns', () => {
    const withCard = buildScreenModel(screenInput({ isReplay: true, card: holding }), LAYOUT_80x24_CARD).keys;
    const without = buildScreenModel(screenInput({ isReplay: true }), LAYOUT_80x24).keys;
    expect(lineText(withCard)).toContain('n p point');
    expect(lineText(without)).not.toContain('n p');
    expect(Array.from(lineText(withCard)).length).toBe(80);
    expect(lineText(withCard)).not.toContain('…'); // whole entries only; ? lists the rest
  });

  it('keeps a note about the card at the top of the event log', () => {
    const model = buildScreenModel(
      screenInput({
        record: turn45,
        card: holding,
        notices: ['card.json: the card was made for "Other", not for "Example airframe": its targets may not apply'],
      }),
      LAYOUT_80x24_CARD,
    );
    const notes = model.events.lines
      .slice(0, 2)
      .map((l) => lineText(l).trim())
      .join(' ');
    expect(notes).toMatch(/^NOTE card\.json: the card was made for "Other"/);
  });

  it('has no panel without a card', () => {
    expect(buildScreenModel(screenInput({ record: turn45 }), LAYOUT_80x24).card).toBeNull();
  });
});

describe('energy and predictions (Ps, the sustained band, the time to the stall, the model check)', () => {
  const all = (model: ScreenModel): string =>
    [model.banner, model.margins.lines, model.readouts.lines, model.events.lines, model.link.lines]
      .map((l) => text(l))
      .join('\n');

  it('shows Ps measured from the engine: a steady climb at constant speed has Ps = the climb rate', () => {
    // Energy method: Ps = dh/dt + (V/g)·dV/dt (Rutowski 1954; Anderson, Aircraft Performance and Design, ch. 5 —
    // from memory); at constant speed it is the rate of climb, here 2 m/s.
    const engine = createFrameEngine(AIRCRAFT);
    let rec: MarginRecord | null = null;
    for (let i = 0; i <= 60; i++)
      rec = engine.push({ tS: i * 0.05, airspeedKind: 'tas', airspeedMps: 20, altM: 100 + 2 * i * 0.05, bankDeg: 0 });
    for (const layout of [LAYOUT_80x24, LAYOUT_120x40]) {
      const readouts = text(buildScreenModel(screenInput({ record: rec }), layout).readouts.lines);
      expect(readouts).toMatch(/Ps {3}\+2\.00 m\/s/);
      expect(readouts).toMatch(/model —/); // no throttle in the frames: no model
    }
  });

  it('shows Ps modelled, and a dash for every energy key that is null, never NaN', () => {
    const rec = { ...turn45, ps_mps: -0.42, ps_model_mps: 0.61 };
    expect(text(buildScreenModel(screenInput({ record: rec }), LAYOUT_80x24).readouts.lines)).toMatch(
      /Ps {3}−0\.42 m\/s +model \+0\.61 m\/s/,
    );
    const empty: MarginRecord = {
      ...turn45,
      dvdt_mps2: null,
      dhdt_mps: null,
      ps_mps: null,
      ps_model_mps: null,
      ps_residual_mps: null,
      ps_residual_mean_3s_mps: null,
      time_to_stall_caution_s: null,
      time_to_stall_warning_s: null,
      sustained_band_mps: null,
    };
    for (const layout of [LAYOUT_80x24, LAYOUT_120x40]) {
      const screen = all(buildScreenModel(screenInput({ record: empty }), layout));
      expect(screen).toMatch(/Ps {3}— +model —/);
      expect(screen).toMatch(/band — at n 1\.41/);
      expect(screen).not.toMatch(/NaN|undefined|Infinity/);
    }
  });

  it('shows the sustained band at the present n, in the chosen units', () => {
    const rec = { ...turn45, sustained_band_mps: [11.2, 21.7] as [number, number] };
    expect(text(buildScreenModel(screenInput({ record: rec }), LAYOUT_80x24).readouts.lines)).toContain(
      'band 11.2–21.7 m/s at n 1.41',
    );
    // 11.2 m/s = 21.8 kt, 21.7 m/s = 42.2 kt (exact knot definition, 1852 m per hour).
    expect(text(buildScreenModel(screenInput({ record: rec, units: 'kt' }), LAYOUT_80x24).readouts.lines)).toContain(
      'band 21.8–42.2 kt',
    );
  });

  it('gives the time to the stall caution under 10 s in the banner, beside the stall bar and in wide readouts', () => {
    const soon = { ...turn45, time_to_stall_caution_s: 6.24 };
    for (const layout of [LAYOUT_80x24, LAYOUT_120x40]) {
      const model = buildScreenModel(screenInput({ record: soon }), layout);
      expect(text(model.banner)).toMatch(/NORMAL — inside the envelope · stall caution in 6\.2 s/);
      const stallBar = model.margins.lines[1]!;
      expect(lineText(stallBar)).toMatch(/in 6\.2 s\s*$/);
      expect(stallBar.find((s) => s.text.includes('in 6.2 s'))!.tone).toBe('caution');
    }
    expect(text(buildScreenModel(screenInput({ record: soon }), LAYOUT_120x40).readouts.lines)).toContain(
      'stall caution in 6.2 s',
    );
    for (const t of [10, 25, 0, null]) {
      const model = buildScreenModel(screenInput({ record: { ...turn45, time_to_stall_caution_s: t } }), LAYOUT_80x24);
      expect(all(model)).not.toMatch(/stall caution in|in \d+\.\d s/);
    }
  });

  it('advises in plain words when the 3 s mean of the residual is beyond ±0.5 m/s', () => {
    const words = (mean: number | null): string => {
      const model = buildScreenModel(
        screenInput({ record: { ...turn45, ps_residual_mean_3s_mps: mean }, events: [event()] }),
        LAYOUT_80x24,
      );
      return model.events.lines.map((l) => lineText(l).trim()).join(' ');
    };
    expect(words(-0.8)).toContain(
      'climbing/accelerating less than the model predicts: the thrust margin may be optimistic (3 s mean −0.80 m/s)',
    );
    expect(words(0.8)).toContain(
      'climbing/accelerating more than the model predicts: the thrust margin may be pessimistic (3 s mean +0.80 m/s)',
    );
    for (const quiet of [0.5, -0.5, 0.2, null]) expect(words(quiet)).not.toMatch(/MODEL|model predicts/);
    // On the 80×24 screen the advisory takes three lines and the newest event still shows below it.
    expect(words(-0.8)).toMatch(/STALL/);
  });
});
