/**
 * `npm run perf`: benchmarks with targets, side by side in one run, reported as ratios where absolute times drift.
 * Prints a table and writes bench-results/perf.json. Options: --quick (smaller inputs), --no-5m (skip the 5 M run),
 * --html-only (only the HTML report's benchmark).
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseAircraft, type Aircraft } from '../src/core/aircraft.js';
import { createFrameEngine } from '../src/core/frame-engine.js';
import { createFrameDecoder } from '../src/decode/frame-decoder.js';
import { parseFrameLine } from '../src/decode/frame-line.js';
import type { Frame } from '../src/core/frame.js';
import { CLI, REPO_ROOT, canPinToOneCore, formatTable, median, percentile, runNode } from './measure.js';
import { syntheticFrameLine, writeSyntheticFlight } from './synthetic-flight.js';
import { createLivePath } from './live-path.js';
import { benchHtmlReport } from './html-report.js';
import { readPathOnce } from './read-path.js';

type Row = [string, string, string, string];
const rows: Row[] = [];
const results: Record<string, unknown> = {};
const quick = process.argv.includes('--quick');
const skip5m = process.argv.includes('--no-5m') || quick;
const htmlOnly = process.argv.includes('--html-only');

function verdict(ok: boolean): string {
  return ok ? 'met' : 'MISSED';
}

function loadDemoAircraft(): Aircraft {
  const json = JSON.parse(readFileSync(join(REPO_ROOT, 'replays/demo-airframe.json'), 'utf8'));
  const r = parseAircraft(json, 'demo-airframe.json');
  if (!r.ok) throw new Error(r.problems.join('\n'));
  return r.value;
}

function benchCore(aircraft: Aircraft): void {
  const count = quick ? 50_000 : 300_000;
  const lines = Array.from({ length: count }, (_, i) => syntheticFrameLine(i, 50));
  const frames: Frame[] = lines.map((l) => {
    const v = parseFrameLine(l);
    if (!v.ok) throw new Error(v.reason);
    return v.frame;
  });
  const time = (fn: () => void): number => {
    fn(); // warm-up
    const start = process.hrtime.bigint();
    fn();
    return Number(process.hrtime.bigint() - start) / count;
  };
  const marginNs = time(() => {
    const tracker = createFrameEngine(aircraft);
    for (const f of frames) tracker.push(f);
  });
  const parseNs = time(() => {
    for (const l of lines) parseFrameLine(l);
  });
  const decodeNs = time(() => {
    const decoder = createFrameDecoder();
    const text = lines.join('\n') + '\n';
    for (let i = 0; i < text.length; i += 4096) decoder.push(text.slice(i, i + 4096));
    decoder.end();
  });
  results['core'] = {
    frames: count,
    margin_ns_per_frame: marginNs,
    parse_line_ns: parseNs,
    decode_stream_ns_per_line: decodeNs,
  };
  rows.push(['per-frame engine (margins, events, breaks)', `${marginNs.toFixed(0)} ns/frame`, 'report', '—']);
  rows.push(['frame line validation', `${parseNs.toFixed(0)} ns/line`, 'report', '—']);
  rows.push(['stream decode (split+validate+time)', `${decodeNs.toFixed(0)} ns/line`, 'report', '—']);
}

async function benchStartup(dir: string): Promise<void> {
  const tiny = join(dir, 'tiny.ndjson');
  await writeSyntheticFlight(tiny, 20);
  const demo = join(REPO_ROOT, 'replays/demo-airframe.json');
  const runs = quick ? 3 : 7;
  const measure = async (args: string[]) => {
    const times: number[] = [];
    for (let i = 0; i < runs; i++) times.push((await runNode(CLI, args, { probe: false })).wallMs);
    return median(times);
  };
  const bareNode = await (async () => {
    const times: number[] = [];
    for (let i = 0; i < runs; i++) times.push((await runNode('-e', ['0'], { probe: false })).wallMs);
    return median(times);
  })();
  const envelopeMs = await measure(['envelope', '--aircraft', demo, '--format', 'json']);
  const reviewMs = await measure(['review', tiny, '--aircraft', demo, '--format', 'json']);
  results['startup'] = { bare_node_ms: bareNode, envelope_ms: envelopeMs, review_tiny_ms: reviewMs };
  rows.push(['start-up: bare node', `${bareNode.toFixed(0)} ms`, 'reference', '—']);
  rows.push(['start-up: envelope', `${envelopeMs.toFixed(0)} ms`, '≤ 300 ms', verdict(envelopeMs <= 300)]);
  rows.push(['start-up: review (tiny file)', `${reviewMs.toFixed(0)} ms`, '≤ 300 ms', verdict(reviewMs <= 300)]);
}

async function benchReview(dir: string): Promise<void> {
  const demo = join(REPO_ROOT, 'replays/demo-airframe.json');
  const bare = new URL('./bare-loop.js', import.meta.url).pathname;
  const sizes = quick ? [200_000] : skip5m ? [1_000_000] : [1_000_000, 5_000_000];
  const perSize: Record<string, unknown>[] = [];
  for (const frames of sizes) {
    const file = join(dir, `flight-${frames}.ndjson`);
    process.stderr.write(`perf: writing ${frames} synthetic frames…\n`);
    const bytes = await writeSyntheticFlight(file, frames);
    const repeats = frames >= 5_000_000 ? 1 : quick ? 1 : 3;
    const bareMs: number[] = [];
    const reviewMs: number[] = [];
    let reviewRss = 0;
    for (let i = 0; i < repeats; i++) {
      process.stderr.write(`perf: review vs bare loop, ${frames} frames, run ${i + 1}/${repeats}…\n`);
      const b = await runNode(bare, [file]);
      const r = await runNode(CLI, ['review', file, '--aircraft', demo, '--format', 'json']);
      if (r.code !== 0) throw new Error(`review exited ${r.code}: ${r.stderr.slice(0, 500)}`);
      bareMs.push(b.wallMs);
      reviewMs.push(r.wallMs);
      reviewRss = Math.max(reviewRss, r.maxRssMb ?? 0);
    }
    // The reading side alone (file to packed batches, nothing computed), in this process: a report row.
    const readNs: number[] = [];
    for (let i = 0; i < repeats; i++) {
      const read = await readPathOnce(file);
      readNs.push((read.ms * 1e6) / (read.frames + read.rejected));
    }
    rows.push([`review reading path ${frames / 1e6} M frames`, `${median(readNs).toFixed(0)} ns/line`, 'report', '—']);
    const ratio = median(reviewMs) / median(bareMs);
    perSize.push({
      frames,
      bytes,
      bare_ms: median(bareMs),
      review_ms: median(reviewMs),
      ratio,
      review_peak_rss_mb: reviewRss,
      read_path_ns_per_line: median(readNs),
    });
    rows.push([
      `review ${frames / 1e6} M frames ÷ bare loop`,
      `${ratio.toFixed(2)}× (${(median(reviewMs) / 1000).toFixed(1)} s vs ${(median(bareMs) / 1000).toFixed(1)} s)`,
      '≤ 1.5× (stretch 1.2×)',
      verdict(ratio <= 1.5),
    ]);
    if (frames === sizes[0] && canPinToOneCore()) {
      // One core (taskset -c 0), CPU time: review reads and computes in one thread there, as on a one-core machine.
      const pairs = quick ? 3 : 7;
      const bareCpu: number[] = [];
      const reviewCpu: number[] = [];
      for (let i = 0; i < pairs; i++) {
        process.stderr.write(`perf: one core, review vs bare loop, ${frames} frames, pair ${i + 1}/${pairs}…\n`);
        const b = await runNode(bare, [file], { oneCore: true });
        const r = await runNode(CLI, ['review', file, '--aircraft', demo, '--format', 'json'], { oneCore: true });
        if (r.code !== 0) throw new Error(`review exited ${r.code}: ${r.stderr.slice(0, 500)}`);
        bareCpu.push(b.cpuMs ?? NaN);
        reviewCpu.push(r.cpuMs ?? NaN);
      }
      const oneCoreRatio = median(reviewCpu) / median(bareCpu);
      perSize[perSize.length - 1]!['one_core'] = {
        pairs,
        bare_cpu_ms: median(bareCpu),
        review_cpu_ms: median(reviewCpu),
        ratio: oneCoreRatio,
      };
      rows.push([
        `review ${frames / 1e6} M frames ÷ bare loop, one core (CPU time)`,
        `${oneCoreRatio.toFixed(2)}× (${(median(reviewCpu) / 1000).toFixed(2)} s vs ${(median(bareCpu) / 1000).toFixed(2)} s)`,
        '≤ 1.2× (stretch 1.0×)',
        verdict(oneCoreRatio <= 1.2),
      ]);
    }
    rows.push([
      `review ${frames / 1e6} M frames peak RSS`,
      `${reviewRss.toFixed(0)} MB`,
      '≤ 150 MB',
      verdict(reviewRss <= 150),
    ]);
    rmSync(file, { force: true });
  }
  if (perSize.length === 2) {
    const a = perSize[0]!['review_peak_rss_mb'] as number;
    const b = perSize[1]!['review_peak_rss_mb'] as number;
    rows.push([
      'review memory 1 M → 5 M',
      `${a.toFixed(0)} → ${b.toFixed(0)} MB`,
      'flat (≤ +15 %)',
      verdict(b <= a * 1.15),
    ]);
  }
  results['review'] = perSize;
}

async function benchLive(aircraft: Aircraft): Promise<void> {
  const seconds = quick ? 2 : 5;
  const rateHz = 1000;
  const live = createLivePath(aircraft);
  const latenciesNs: number[] = [];
  const cpuStart = process.cpuUsage();
  const wallStart = process.hrtime.bigint();
  let sent = 0;
  await new Promise<void>((resolve) => {
    const timer = setInterval(() => {
      const elapsedS = Number(process.hrtime.bigint() - wallStart) / 1e9;
      const due = Math.min(Math.floor(elapsedS * rateHz), seconds * rateHz);
      while (sent < due) {
        const chunk = syntheticFrameLine(sent, rateHz) + '\n';
        const t0 = process.hrtime.bigint();
        live.push(chunk);
        latenciesNs.push(Number(process.hrtime.bigint() - t0));
        sent++;
      }
      if (sent >= seconds * rateHz) {
        clearInterval(timer);
        resolve();
      }
    }, 1);
  });
  const wallUs = Number(process.hrtime.bigint() - wallStart) / 1e3;
  const cpu = process.cpuUsage(cpuStart);
  const sorted = latenciesNs.sort((a, b) => a - b);
  const p50 = percentile(sorted, 50) / 1e6;
  const p99 = percentile(sorted, 99) / 1e6;
  const cpuShare = (cpu.user + cpu.system) / wallUs;
  const renderMs: number[] = [];
  for (let i = 0; i < 50; i++) {
    const t0 = process.hrtime.bigint();
    live.renderPlot();
    renderMs.push(Number(process.hrtime.bigint() - t0) / 1e6);
  }
  await live.stop();
  const renderMedian = median(renderMs);
  rows.push(['dashboard n–V plot model per redraw', `${renderMedian.toFixed(2)} ms`, 'report (≤ 20 redraws/s)', '—']);
  results['live'] = {
    rate_hz: rateHz,
    frames: sent,
    accepted: live.accepted(),
    p50_ms: p50,
    p99_ms: p99,
    cpu_share: cpuShare,
    plot_model_ms: renderMedian,
  };
  rows.push(['live path @1 kHz: p50 per frame', `${p50.toFixed(3)} ms`, 'report', '—']);
  rows.push(['live path @1 kHz: p99 per frame', `${p99.toFixed(3)} ms`, '≤ 2 ms', verdict(p99 <= 2)]);
  rows.push(['live path @1 kHz: CPU share', `${(cpuShare * 100).toFixed(1)} % of one core`, 'report', '—']);
}

async function main(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'turnmargin-perf-'));
  const aircraft = loadDemoAircraft();
  try {
    if (!htmlOnly) {
      process.stderr.write('perf: core costs…\n');
      benchCore(aircraft);
      process.stderr.write('perf: live path at 1 kHz…\n');
      await benchLive(aircraft);
      process.stderr.write('perf: start-up…\n');
      await benchStartup(dir);
      await benchReview(dir);
    }
    await benchHtmlReport(dir, quick, rows, results);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  const table = formatTable(rows);
  process.stdout.write(
    `\nturnmargin benchmarks (${new Date().toISOString()}, node ${process.version}${quick ? ', quick' : ''})\n\n${table}\n`,
  );
  const outDir = join(REPO_ROOT, 'bench-results');
  mkdirSync(outDir, { recursive: true });
  writeFileSync(
    join(outDir, 'perf.json'),
    JSON.stringify({ date: new Date().toISOString(), node: process.version, quick, results, table: rows }, null, 2),
  );
  process.stdout.write(`\nwritten: bench-results/perf.json\n`);
}

main().catch((err: unknown) => {
  process.stderr.write(`perf: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
  process.exitCode = 1;
});
