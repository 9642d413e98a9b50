import { parse } from 'parse5';
import { describe, expect, it } from 'vitest';
import { createFlightReviewer } from '../../src/core/flight-review.js';
import type { Frame } from '../../src/core/frame.js';
import { createTimeHistory } from '../../src/core/time-history.js';
import { htmlFlightFrom, renderHtmlReport, type HtmlFlight } from '../../src/report/html-report.js';
import { exampleAirframe } from '../helpers/airframes.js';
import { checkXml } from './xml-check.js';

const AIRCRAFT = exampleAirframe();

/** A short invented flight: level at 20 m/s, then a 72° banked turn (n = 3.24: structure caution), with a 2 s gap. */
function flight(name: string): HtmlFlight {
  const reviewer = createFlightReviewer(AIRCRAFT, { smoothTauS: 0 });
  for (let i = 0; i < 200; i++) {
    const tS = i < 100 ? i / 10 : i / 10 + 2;
    const bank = i >= 60 && i < 160 ? 72 : 0;
    const nz = 1 / Math.cos((bank * Math.PI) / 180);
    const frame: Frame = { tS, airspeedKind: 'tas', airspeedMps: 20, altM: 100, bankDeg: bank, nz };
    reviewer.accept(frame);
  }
  return htmlFlightFrom(reviewer.finish(), { source: name, aircraft: AIRCRAFT, aircraftFile: 'airframe.json' });
}

function html5Errors(html: string): string[] {
  const errors: string[] = [];
  parse(html, { onParseError: (e) => errors.push(`${e.code} at ${e.startLine}:${e.startCol}`) });
  return errors;
}

describe('HTML report renderer', () => {
  it('gives several flights a summary table and one section each, with ids unique across the page', () => {
    const html = renderHtmlReport({ flights: [flight('a.ndjson'), flight('b.ndjson')] });
    expect(html5Errors(html)).toEqual([]);
    const summary = /<table class="summary">([\s\S]*?)<\/table>/.exec(html)![1]!;
    expect(summary.match(/<tr>/g)).toHaveLength(3); // header and two flights
    expect(html).toContain('<h2>Flight 1: a.ndjson</h2>');
    expect(html).toContain('<h2>Flight 2: b.ndjson</h2>');
    const ids = [...html.matchAll(/\sid="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(ids).size).toBe(ids.length);
    for (const svg of html.match(/<svg[\s\S]*?<\/svg>/g)!) expect(checkXml(svg)[0]!.name).toBe('svg');
  });

  it('marks the gap in the data on the time histories and draws the load factor from bank', () => {
    const html = renderHtmlReport({ flights: [flight('a.ndjson')] });
    expect(html).toMatch(/class="break"/);
    expect(html).toMatch(/data-series="n_from_bank"/);
    expect(html).toContain('Every one of the 200 frames is drawn.');
  });

  it('names V_NE with its value above the airspeed panel when it lies too far above the speeds flown to draw', () => {
    // The flight holds 20 m/s; the example airframe's vne_mps is far above (a line there would squash the data).
    const html = renderHtmlReport({ flights: [flight('a.ndjson')] });
    expect(html).toContain(`V_NE (CAS) ${AIRCRAFT.vneMps} ↑`);
    expect(html).not.toMatch(/<line class="ref"[^>]*stroke-dasharray="6 3 1 3"/);
  });

  it('shows what later work adds when the review carries it: ended_by, model check, CAS and Ps, test points', () => {
    const f = flight('a.ndjson');
    const events = f.json.events as Array<Record<string, unknown>>;
    expect(events.length).toBeGreaterThan(0);
    events[0]!['ended_by'] = 'data_gap';
    events[0]!['min_time_to_stall_caution_s'] = 4.25;
    f.json['model_check'] = {
      full: { frames: 120, mean_residual_mps: -0.62, sd_residual_mps: 0.2, drag_error_pct: 18.5 },
      idle: null,
    };
    const acc = createTimeHistory();
    const rec = { alerts: [], utilization: { stall: 0.5, thrust: 0.4, structure: 0.3 } };
    for (let i = 0; i < 10; i++)
      acc.push({ ...rec, t_s: i / 10, tas_mps: 20, cas_mps: 19.6, ps_mps: 0.1, ps_model_mps: 0.3 } as never);
    f.history = acc.finish();
    const html = renderHtmlReport({
      flights: [f],
      testPoints: [
        { id: 'P01', status: 'achieved', bank_deg: 45, tas_mps: 20, load_factor: 1.41, longest_hold_s: 3.4 },
        { id: 'P02', status: 'not_flown', bank_deg: 60, tas_mps: 22, load_factor: 2 },
      ],
    });
    expect(html5Errors(html)).toEqual([]);
    expect(html).toMatch(/<td>data gap<\/td>/);
    expect(html).toContain('<td class="num">4.3</td>');
    expect(html).toContain('<h2>Model check</h2>');
    expect(html).toContain('<td class="num">-0.62</td>');
    expect(html).toMatch(/data-series="cas_mps"/);
    expect(html).toMatch(/data-series="ps_model_mps"/);
    expect(html).toContain('Specific excess power (m/s)');
    expect(html).toContain('<h2>Test points</h2>');
    expect(html).toContain('✔ achieved');
    expect(html).toContain('○ not flown');
  });
});
