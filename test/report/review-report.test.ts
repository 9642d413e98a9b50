import { describe, expect, it } from 'vitest';
import { createFlightReviewer } from '../../src/core/flight-review.js';
import type { Frame } from '../../src/core/frame.js';
import {
  checkSummary,
  failingEvents,
  formatUtilization,
  reviewToCsv,
  reviewToJson,
  reviewToMarkdown,
  type ReviewContext,
} from '../../src/report/review-report.js';
import { exampleAirframe } from '../helpers/airframes.js';

const f = (tS: number, nz: number, tas = 12): Frame => ({ tS, airspeedKind: 'tas', airspeedMps: tas, altM: 0, nz });

function reviewOf(frames: Frame[], rejects = 0, thrustN?: number) {
  const aircraft = exampleAirframe(thrustN !== undefined ? { thrust: { model: 'constant', thrust_n: thrustN } } : {});
  const r = createFlightReviewer(aircraft, { smoothTauS: 0 });
  for (let i = 1; i <= rejects; i++) r.reject(i, { reason: `bad line ${i}`, code: 'invalid_json' });
  for (const fr of frames) r.accept(fr);
  const ctx: ReviewContext = { source: 'flight.ndjson', aircraft, aircraftFile: 'airframe.json' };
  return { review: r.finish(), ctx };
}

describe('review renderers', () => {
  it('says plainly when a flight had no caution or warning', () => {
    const { review, ctx } = reviewOf([f(0, 1), f(0.1, 1.1), f(0.2, 1)]);
    const md = reviewToMarkdown(review, ctx);
    expect(md).toContain('No caution or warning: every limit stayed below its caution threshold.');
    expect(md).toContain('## Rejected lines\n\nNone.');
    expect(reviewToCsv(review)).toBe(
      'limit,level,start_s,end_s,duration_s,peak_utilization,peak_t_s,speed_at_peak_mps,n_at_peak,ended_by,' +
        'min_time_to_stall_caution_s,assumed_n_from_bank_share,assumed_temperature_isa_share,' +
        'assumed_n_limit_default_share,model_check_full_frames,model_check_full_mean_residual_mps,' +
        'model_check_full_sd_residual_mps,model_check_full_drag_error_pct,model_check_idle_frames,' +
        'model_check_idle_mean_residual_mps,model_check_idle_sd_residual_mps,model_check_idle_drag_error_pct\n' +
        // no event: one row with the event columns empty, carrying the flight's assumed shares (no model check here)
        ',,,,,,,,,,,0,1,0,,,,,,,,\n',
    );
    expect(reviewToJson(review, ctx).events).toEqual([]);
    expect(checkSummary(review, ctx, 'caution').trimEnd().split('\n').pop()).toBe('PASS: no event reached caution');
  });

  it('says for what share of the frames each input was assumed, in JSON, Markdown and CSV', () => {
    // 4 frames: one with bank only (n from bank), one with oat_c; none has the structural limit from the default
    const frames: Frame[] = [
      f(0, 1),
      { tS: 0.1, airspeedKind: 'tas', airspeedMps: 12, altM: 0, bankDeg: 20 },
      { ...f(0.2, 1), oatC: 15 },
      f(0.3, 1.7),
    ];
    const { review, ctx } = reviewOf(frames);
    expect(reviewToJson(review, ctx).assumed_share).toEqual({
      n_from_bank: 0.25,
      temperature_isa: 0.75,
      n_limit_default: 0,
    });
    const md = reviewToMarkdown(review, ctx);
    expect(md).toContain('| Assumed: n from bank (no nz) | 25.0 % of the frames |');
    expect(md).toContain('| Assumed: ISA temperature (no oat_c) | 75.0 % of the frames |');
    expect(md).not.toContain('Assumed: default n limit');
    const csv = reviewToCsv(review).trimEnd().split('\n');
    const header = csv[0]!.split(',');
    const row = csv[1]!.split(',');
    const at = (column: string) => row[header.indexOf(column)];
    expect([
      at('assumed_n_from_bank_share'),
      at('assumed_temperature_isa_share'),
      at('assumed_n_limit_default_share'),
    ]).toEqual(['0.25', '0.75', '0']);
  });

  it('lists the first 100 rejected lines and says how many more there were', () => {
    const { review, ctx } = reviewOf([f(0, 1)], 130);
    const md = reviewToMarkdown(review, ctx);
    expect(md).toContain('130 lines rejected');
    expect(md).toContain('| 100 | invalid_json | bad line 100 |');
    expect(md).not.toContain('| 101 | invalid_json | bad line 101 |');
    expect(md).toContain('… and 30 more (the first 100 are listed).');
    const json = reviewToJson(review, ctx);
    expect(json.rejected).toBe(130);
    expect(json.rejects).toHaveLength(100);
    expect(json.frames).toBe(131);
  });

  it('writes a thrust event with n_thrust = 0 as an unbounded peak: null in JSON, words in Markdown', () => {
    // Constant 2 N at 20 m/s: q·S·CD0 = 4.04 N > 2 N, so n_thrust = 0 (Anderson ch. 6: no level flight)
    const { review, ctx } = reviewOf([f(0, 1, 20), f(0.1, 1, 20)], 0, 2);
    const json = reviewToJson(review, ctx);
    expect(json.events).toHaveLength(1);
    expect(json.events[0]!.limit).toBe('thrust');
    expect(json.events[0]!.peak_utilization).toBeNull();
    expect(json.peaks.thrust).toEqual({ utilization: null, t_s: null });
    expect(reviewToMarkdown(review, ctx)).toContain('n_thrust = 0');
    expect(formatUtilization(Infinity)).toBe('n_thrust = 0');
    expect(formatUtilization(0.8123)).toBe('81.2 %');
  });

  it('fails the check on warnings by default and on cautions when asked', () => {
    // 12 m/s: nz 1.6 → stall utilization 0.8625 (caution), 1.75 → 0.943 (warning); n_stall = 1.85499
    const caution = reviewOf([f(0, 1), f(0.1, 1.6), f(0.2, 1)]);
    expect(failingEvents(caution.review, 'warning')).toHaveLength(0);
    expect(failingEvents(caution.review, 'caution')).toHaveLength(1);
    const warning = reviewOf([f(0, 1), f(0.1, 1.75), f(0.2, 1)]);
    expect(failingEvents(warning.review, 'warning')).toHaveLength(1);
    expect(failingEvents(warning.review, 'caution')).toHaveLength(2);
    expect(checkSummary(warning.review, warning.ctx, 'warning')).toContain('FAIL: 1 event reached warning');
  });

  it('escapes table separators in Markdown cells', () => {
    const aircraft = exampleAirframe();
    const r = createFlightReviewer(aircraft);
    r.reject(1, { reason: 'column a|b is not a number', code: 'wrong_type', key: 'a|b' });
    r.accept(f(0, 1));
    const md = reviewToMarkdown(r.finish(), { source: 'x', aircraft, aircraftFile: 'y' });
    expect(md).toContain('| 1 | wrong_type | column a\\|b is not a number |');
  });
});
