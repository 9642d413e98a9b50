/**
 * `npm run perf` part: the HTML report of a 1 M-frame flight against `review --format json` on the same file.
 * Targets (issue: flight report): the report under 5 MB, and its time at most 1.5× the JSON review's.
 */
import { rmSync, statSync } from 'node:fs';
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
  await writeSyntheticFlight(file, frames);
  const demo = join(REPO_ROOT, 'replays/demo-airframe.json');
  const jsonMs: number[] = [];
  const htmlMs: number[] = [];
  for (let i = 0; i < repeats; i++) {
    process.stderr.write(`perf: html report vs json review, ${frames} frames, run ${i + 1}/${repeats}…\n`);
    const j = await runNode(CLI, ['review', file, '--aircraft', demo, '--format', 'json'], { probe: false });
    if (j.code !== 0) throw new Error(`review --format json exited ${j.code}: ${j.stderr.slice(0, 500)}`);
    jsonMs.push(j.wallMs);
    const h = await runNode(CLI, ['review', file, '--aircraft', demo, '--format', 'html', '--out', out, '--force'], {
      probe: false,
    });
    if (h.code !== 0) throw new Error(`review --format html exited ${h.code}: ${h.stderr.slice(0, 500)}`);
    htmlMs.push(h.wallMs);
  }
  const sizeMb = statSync(out).size / 1e6;
  const ratio = median(htmlMs) / median(jsonMs);
  rmSync(file, { force: true });
  results['html_report'] = { frames, html_ms: median(htmlMs), json_ms: median(jsonMs), ratio, size_mb: sizeMb };
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
}
