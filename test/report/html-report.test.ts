import { existsSync, mkdtempSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parse } from 'parse5';
import { beforeAll, describe, expect, it } from 'vitest';
import { EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';
import { REPO_ROOT, runCli } from '../helpers/run-cli.js';
import { checkXml } from './xml-check.js';

// test/fixtures/review-flight.ndjson: the invented test flight of test/cli/review.test.ts (planted exceedances,
// bad lines). The report's numbers are compared with `review --format json` on the same file.
const FLIGHT = join(REPO_ROOT, 'test/fixtures/review-flight.ndjson');

function tmp(): string {
  return mkdtempSync(join(tmpdir(), 'turnmargin-html-'));
}

/** Parse errors of a standards-conforming HTML5 parser (parse5). */
function html5Errors(html: string): string[] {
  const errors: string[] = [];
  parse(html, { onParseError: (e) => errors.push(`${e.code} at line ${e.startLine}:${e.startCol}`) });
  return errors;
}

/** Every <svg>…</svg> of the page (they are not nested). */
function svgs(html: string): string[] {
  return [...html.matchAll(/<svg[\s\S]*?<\/svg>/g)].map((m) => m[0]);
}

/** Rows of the exceedance table as text cells. */
function eventRows(html: string): string[][] {
  const table = /<table class="events">([\s\S]*?)<\/table>/.exec(html)?.[1] ?? '';
  const body = /<tbody>([\s\S]*?)<\/tbody>/.exec(table)?.[1] ?? '';
  return [...body.matchAll(/<tr>([\s\S]*?)<\/tr>/g)].map((r) =>
    [...r[1]!.matchAll(/<td[^>]*>([\s\S]*?)<\/td>/g)].map((c) => c[1]!.replace(/<[^>]+>/g, '').trim()),
  );
}

describe('review --format html (built CLI)', () => {
  let dir: string;
  let html: string;
  let json: {
    events: Array<
      { limit: string; level: string; start_s: number; end_s: number; duration_s: number } & Record<string, unknown>
    >;
  };

  beforeAll(async () => {
    dir = tmp();
    const out = join(dir, 'report.html');
    const args = ['review', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0'];
    const [h, j] = await Promise.all([
      runCli([...args, '--format', 'html', '--out', out]),
      runCli([...args, '--format', 'json']),
    ]);
    expect(h.stderr).toBe('');
    expect(h.code).toBe(0);
    expect(j.code).toBe(0);
    html = readFileSync(out, 'utf8');
    json = JSON.parse(j.stdout);
  });

  it('is one HTML5 document that a conforming parser reads without a single error', () => {
    expect(html.startsWith('<!DOCTYPE html>')).toBe(true);
    expect(html5Errors(html)).toEqual([]);
  });

  it('loads nothing from anywhere: no http: or https: reference, no script, no external stylesheet or font', () => {
    expect(html).not.toMatch(/https?:/i);
    expect(html).not.toMatch(/<script|<link|@import|@font-face|url\((?!#)/i);
  });

  it('draws every chart as well-formed SVG: the time histories and the n–V plane', () => {
    const charts = svgs(html);
    expect(charts.length).toBe(2);
    for (const svg of charts) expect(checkXml(svg)[0]!.name).toBe('svg');
    const ids = checkXml(charts[1]!).map((e) => e.attributes['id']);
    expect(ids).toContain('f1-nv-stall-curve');
    expect(ids).toContain('f1-nv-stall-caution-curve');
  });

  it('lists in its exceedance table exactly the events of review --format json, in order', () => {
    const rows = eventRows(html);
    expect(json.events.length).toBe(8);
    expect(rows).toHaveLength(json.events.length);
    const limitWords: Record<string, string> = {
      stall: 'Stall',
      structure: 'Structure',
      thrust: 'Thrust (sustained turn)',
      speed: 'Speed (V_NE)',
    };
    json.events.forEach((e, i) => {
      const r = rows[i]!;
      expect(r[1]).toBe(e.start_s.toFixed(2));
      expect(r[2]).toBe(e.end_s.toFixed(2));
      expect(r[3]).toBe(e.duration_s.toFixed(2));
      expect(r[4]).toBe(limitWords[e.limit]);
      expect(r[5]).toContain(e.level.toUpperCase());
    });
  });

  it('puts the verdict per limit, the cautions and the sections in the order a reader needs them', () => {
    const order = ['Verdict', 'Airframe, thresholds and data', 'Exceedances', 'Time histories', 'The n–V plane'].map(
      (h) => html.indexOf(`<h2>${h}</h2>`),
    );
    expect(order.every((i) => i > 0)).toBe(true);
    expect([...order].sort((a, b) => a - b)).toEqual(order);
    expect(html).toMatch(/WARNING<\/span> <strong>Stall<\/strong>: warning reached/);
    expect(html).toMatch(/CAUTION<\/span> <strong>Thrust \(sustained turn\)<\/strong>: caution reached/);
    expect(html).toContain('Advisory only');
    expect(html).toMatch(/@media print/);
  });

  it('shades the events on the utilization panels and carries levels by pattern and word, not colour alone', () => {
    expect(html).toMatch(/class="shade-warning"/);
    expect(html).toMatch(/class="shade-caution"/);
    expect(html).toMatch(/<pattern id="f1-hatch-warning"/);
    expect(html).toMatch(/■ WARNING/);
    expect(html).toMatch(/▲ CAUTION/);
  });

  it('refuses to overwrite an existing file without --force, and overwrites it with --force', async () => {
    const out = join(dir, 'exists.html');
    writeFileSync(out, 'keep me');
    const args = ['review', FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--format', 'html', '--out', out];
    const refused = await runCli(args);
    expect(refused.code).toBe(2);
    expect(refused.stderr).toMatch(/exists; give --force/);
    expect(readFileSync(out, 'utf8')).toBe('keep me');
    const forced = await runCli([...args, '--force']);
    expect(forced.code).toBe(0);
    expect(readFileSync(out, 'utf8').startsWith('<!DOCTYPE html>')).toBe(true);
  });
});

describe('review --format html on a long flight', () => {
  it('still draws a planted single-frame peak among 130 000 frames (read through the worker thread)', async () => {
    const dir = tmp();
    const file = join(dir, 'long.ndjson');
    const frames = 130_000;
    const peakAt = 77_777;
    const lines: string[] = [];
    for (let i = 0; i < frames; i++) {
      const nz = i === peakAt ? 3.6 : 1.2 + 0.2 * Math.sin(i / 700);
      lines.push(`{"t_s":${(i / 50).toFixed(2)},"tas_mps":20,"alt_m":100,"bank_deg":30,"nz":${nz.toFixed(4)}}`);
    }
    writeFileSync(file, lines.join('\n') + '\n');
    expect(statSync(file).size).toBeGreaterThan(8 * 1024 * 1024); // the worker path of review
    const out = join(dir, 'long.html');
    const r = await runCli(
      ['review', file, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0', '--format', 'html', '--out', out],
      { timeoutMs: 60_000 },
    );
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const html = readFileSync(out, 'utf8');
    expect(html).toContain('Series reduced for drawing');
    // Read the n panel back: its value range and pixel span are on the panel, the path holds the drawn points.
    const panel =
      /<g class="panel"[^>]*data-lo="([^"]+)" data-hi="([^"]+)" data-top="([^"]+)" data-bottom="([^"]+)"[^>]*>(?:(?!<g class="panel")[\s\S])*?data-series="n_measured" data-points="(\d+)" d="([^"]+)"/.exec(
        html,
      );
    expect(panel).not.toBeNull();
    const [lo, hi, top, bottom] = panel!.slice(1, 5).map(Number) as [number, number, number, number];
    expect(Number(panel![5])).toBeLessThanOrEqual(2000);
    const ys = [...panel![6]!.matchAll(/[ML]-?[\d.]+ (-?[\d.]+)/g)].map((m) => Number(m[1]));
    const drawnMax = lo + ((bottom - Math.min(...ys)) / (bottom - top)) * (hi - lo);
    expect(drawnMax).toBeCloseTo(3.6, 1);
    expect(html5Errors(html)).toEqual([]);
    expect(existsSync(file)).toBe(true);
  }, 90_000);
});

describe('review A B --format html (built CLI): several flights in one page', () => {
  const CLEAN = join(REPO_ROOT, 'test/fixtures/review-clean.ndjson');
  let html = '';
  let json: { flights: Array<{ source: string; events: Array<Record<string, unknown>> }> };

  beforeAll(async () => {
    const dir = tmp();
    const out = join(dir, 'R.html');
    // review-flight.ndjson twice (its events), review-clean.ndjson between (no event).
    const args = ['review', FLIGHT, CLEAN, FLIGHT, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--smooth', '0'];
    const [h, j] = await Promise.all([
      runCli([...args, '--format', 'html', '--out', out]),
      runCli([...args, '--format', 'json']),
    ]);
    expect(h.stderr).toBe('');
    expect(h.code).toBe(0);
    expect(j.code).toBe(0);
    html = readFileSync(out, 'utf8');
    json = JSON.parse(j.stdout);
  });

  it('parses as HTML5 without an error and loads nothing from anywhere', () => {
    expect(html5Errors(html)).toEqual([]);
    expect(html).not.toMatch(/https?:/i);
    expect(html).not.toMatch(/<script|<link|@import|@font-face|url\((?!#)/i);
  });

  it('has a summary table on top and one section per flight, each with well-formed charts', () => {
    const summary = /<table class="summary">([\s\S]*?)<\/table>/.exec(html)![1]!;
    expect(summary.match(/<tr>/g)).toHaveLength(4); // header and three flights
    expect(html.indexOf('<table class="summary">')).toBeLessThan(html.indexOf('<section class="flight"'));
    for (let i = 1; i <= 3; i++) expect(html).toContain(`<section class="flight" id="flight-${i}">`);
    const charts = svgs(html);
    expect(charts).toHaveLength(6); // time histories and the n–V plane per flight
    for (const svg of charts) expect(checkXml(svg)[0]!.name).toBe('svg');
    const ids = [...html.matchAll(/\sid="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(ids).size).toBe(ids.length);
  });

  it("lists in each flight's exceedance table exactly that flight's events of review --format json", () => {
    const sections = html.split('<section class="flight"').slice(1);
    expect(sections).toHaveLength(3);
    json.flights.forEach((f, i) => {
      const rows = eventRows(sections[i]!);
      expect(rows).toHaveLength(f.events.length);
      f.events.forEach((e, k) => {
        expect(rows[k]![1]).toBe((e['start_s'] as number).toFixed(2));
        expect(rows[k]![2]).toBe((e['end_s'] as number).toFixed(2));
        expect(rows[k]![5]).toContain(String(e['level']).toUpperCase());
      });
    });
    expect(json.flights[0]!.events.length).toBe(8);
    expect(json.flights[1]!.events.length).toBe(0);
  });
});
