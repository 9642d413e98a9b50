/**
 * `npm run perf` part: the HTML report of a 1 M-frame flight against `review --format json` on the same file.
 * Targets (issue: flight report): the report under 5 MB, its time at most 1.5× the JSON review's, and a planted
 * single-frame peak of the load factor still drawn (read back from the load-factor panel's path).
 */
import { readFileSync, rmSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { CLI, REPO_ROOT, median, runNode } from './measure.js';
import { writeSyntheticFlight } from './synthetic-flight.js';

type Row = [string, string, string, string];

export async function benchHtmlReport(
  dir: string,
  quick: boolean,
  rows: Row[],
  results: Record<string, unknown>,
): Promise<void> {
  const frames = quick ? 200_000 : 1_000_000;
  const repeats = quick ? 1 : 3;
  const file = join(dir, 'html-flight.ndjson');
  const out = join(dir, 'report.html');
  // One frame at nz 3.4 among loads below 1.8 (smoothing off, so the record's n is the frame's).
  const peakAt = Math.floor(frames * 0.61);
  const plantedNz = 3.4;
  await writeSyntheticFlight(file, frames, 50, (i) =>
    i === peakAt
      ? `{"t_s":${(i / 50).toFixed(3)},"tas_mps":18.00,"alt_m":120.0,"bank_deg":20.00,"nz":${plantedNz}}`
      : undefined,
  );
  const demo = join(REPO_ROOT, 'replays/demo-airframe.json');
  const jsonMs: number[] = [];
  const htmlMs: number[] = [];
  for (let i = 0; i < repeats; i++) {
    process.stderr.write(`perf: html report vs json review, ${frames} frames, run ${i + 1}/${repeats}…\n`);
    const j = await runNode(CLI, ['review', file, '--aircraft', demo, '--smooth', '0', '--format', 'json'], {
      probe: false,
    });
    if (j.code !== 0) throw new Error(`review --format json exited ${j.code}: ${j.stderr.slice(0, 500)}`);
    jsonMs.push(j.wallMs);
    const h = await runNode(
      CLI,
      ['review', file, '--aircraft', demo, '--smooth', '0', '--format', 'html', '--out', out, '--force'],
      { probe: false },
    );
    if (h.code !== 0) throw new Error(`review --format html exited ${h.code}: ${h.stderr.slice(0, 500)}`);
    htmlMs.push(h.wallMs);
  }
  const sizeMb = statSync(out).size / 1e6;
  const drawnPeak = drawnLoadFactorMax(readFileSync(out, 'utf8'));
  const ratio = median(htmlMs) / median(jsonMs);
  rmSync(file, { force: true });
  results['html_report'] = {
    frames,
    html_ms: median(htmlMs),
    json_ms: median(jsonMs),
    ratio,
    size_mb: sizeMb,
    planted_nz: plantedNz,
    drawn_n_max: drawnPeak,
  };
  rows.push([
    `html report ${frames / 1e6} M frames ÷ json review`,
    `${ratio.toFixed(2)}× (${(median(htmlMs) / 1000).toFixed(1)} s vs ${(median(jsonMs) / 1000).toFixed(1)} s)`,
    '≤ 1.5×',
    ratio <= 1.5 ? 'met' : 'MISSED',
  ]);
  rows.push([
    `html report ${frames / 1e6} M frames size`,
    `${sizeMb.toFixed(2)} MB`,
    '< 5 MB',
    sizeMb < 5 ? 'met' : 'MISSED',
  ]);
  const drawn = drawnPeak !== null && Math.abs(drawnPeak - plantedNz) < 0.05;
  rows.push([
    `html report ${frames / 1e6} M frames: planted one-frame peak`,
    drawnPeak === null ? 'no load-factor panel' : `drawn at n ${drawnPeak.toFixed(2)} (planted ${plantedNz})`,
    'drawn',
    drawn ? 'met' : 'MISSED',
  ]);
}

/** The highest load factor the n panel draws, read back from its value range, pixel span and path. */
function drawnLoadFactorMax(html: string): number | null {
  const panel =
    /<g class="panel"[^>]*data-lo="([^"]+)" data-hi="([^"]+)" data-top="([^"]+)" data-bottom="([^"]+)"[^>]*>(?:(?!<g class="panel")[\s\S])*?data-series="n_measured" data-points="\d+" d="([^"]+)"/.exec(
      html,
    );
  if (!panel) return null;
  const [lo, hi, top, bottom] = panel.slice(1, 5).map(Number) as [number, number, number, number];
  const ys = [...panel[5]!.matchAll(/[ML]-?[\d.]+ (-?[\d.]+)/g)].map((m) => Number(m[1]));
  return lo + ((bottom - Math.min(...ys)) / (bottom - top)) * (hi - lo);
}
