/**
 * `npm run soak`: the long fault-tolerance runs (not part of `npm test`). Prints a report and writes
 * bench-results/soak.json.
 *  - Soak: 24 h of 50 Hz telemetry (4.32 M frames, synthetic) through the live path as fast as possible: the RSS and
 *    heap curve after a gc every 250 k frames, and the throughput of each chunk (no slowdown).
 *  - serve under load: 20 clients × 200 frames/s on loopback for 60 s against the built `turnmargin serve`:
 *    every answer in order, latency from send to answer (p50/p99).
 * Options: --quick (200 k frames, 10 s of load), --no-serve, --no-soak, --record (the soak also records every
 * line to a temporary file, as `watch --record` does: about 0.5 GB for 24 h; deleted afterwards).
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadAircraftFile } from '../src/cli/load.js';
import { REPO_ROOT, formatTable, median } from './measure.js';
import { runServeLoad, type ServeLoadResult } from './serve-load.js';
import { runServeFloodRows } from './serve-flood.js';
import { runLiveSoak, type SoakCheckpoint, type SoakResult } from './soak-live-path.js';

type Row = [string, string, string, string];

const quick = process.argv.includes('--quick');
const AIRFRAME = join(REPO_ROOT, 'replays', 'demo-airframe.json');
const SOAK_RATE_HZ = 50;
const SOAK_FRAMES = quick ? 200_000 : 24 * 3600 * SOAK_RATE_HZ;
const CHECKPOINT_EVERY = quick ? 25_000 : 250_000;
const LOAD = { clients: 20, rateHz: 200, durationS: quick ? 10 : 60 };
/** Heap after gc may grow by at most this from the first checkpoint after warm-up to the end. */
const HEAP_GROWTH_LIMIT_MB = 5;
/** RSS: the late quarter's median may exceed the early quarter's by at most this (allocator noise is larger than heap's). */
const RSS_GROWTH_LIMIT_MB = 25;
/** The late chunks must run at least this fraction of the early chunks' rate. */
const SLOWDOWN_FLOOR = 0.8;

const SOAK_THRESHOLDS = { stallCaution: 0.7, stallWarning: 0.76, thrustCaution: 0.8 };

const verdict = (ok: boolean): string => (ok ? 'met' : 'MISSED');
const mb = (x: number): string => `${x.toFixed(1)} MB`;

function soakVerdicts(result: SoakResult): {
  rows: Row[];
  heapGrowthMb: number;
  rssEarlyMb: number;
  rssLateMb: number;
  earlyRate: number;
  lateRate: number;
} {
  const cps = result.checkpoints;
  // The first chunk includes JIT warm-up; compare from the second checkpoint on.
  const base = cps[Math.min(1, cps.length - 1)]!;
  const last = cps.at(-1)!;
  const heapGrowthMb = last.heapUsedMb - base.heapUsedMb;
  // RSS moves with the allocator and the kernel, up and down: compare the early and late quarters' medians.
  const quarter = Math.max(1, Math.floor(cps.length / 4));
  const early = cps.slice(1, 1 + quarter);
  const late = cps.slice(-quarter);
  const earlyOr = (xs: SoakCheckpoint[]): SoakCheckpoint[] => (xs.length ? xs : [cps[0]!]);
  const earlyRate = median(earlyOr(early).map((c) => c.chunkFramesPerS));
  const lateRate = median(late.map((c) => c.chunkFramesPerS));
  const rssEarlyMb = median(earlyOr(early).map((c) => c.rssMb));
  const rssLateMb = median(late.map((c) => c.rssMb));
  const rssAll = cps.slice(1).map((c) => c.rssMb);
  const rows: Row[] = [
    [
      `soak: ${(SOAK_FRAMES / 1e6).toFixed(2)} M frames (${(SOAK_FRAMES / SOAK_RATE_HZ / 3600).toFixed(1)} h at ${SOAK_RATE_HZ} Hz)`,
      `${result.wallS.toFixed(1)} s wall, ${Math.round(SOAK_FRAMES / result.wallS)} frames/s`,
      'as fast as possible',
      '—',
    ],
    [
      'soak: accepted / rejected / events / redraws',
      `${result.accepted} / ${result.rejected} / ${result.events} / ${result.redraws}`,
      'all accepted',
      verdict(result.accepted === SOAK_FRAMES && result.rejected === 0),
    ],
    [
      'soak: heap after gc, 2nd checkpoint → end',
      `${mb(base.heapUsedMb)} → ${mb(last.heapUsedMb)} (${heapGrowthMb >= 0 ? '+' : ''}${heapGrowthMb.toFixed(1)})`,
      `flat (< ${HEAP_GROWTH_LIMIT_MB} MB)`,
      verdict(heapGrowthMb < HEAP_GROWTH_LIMIT_MB),
    ],
    [
      'soak: RSS after gc, early vs late quarter (median)',
      `${mb(rssEarlyMb)} → ${mb(rssLateMb)} (range ${Math.min(...rssAll).toFixed(0)}–${Math.max(...rssAll).toFixed(0)} MB)`,
      `flat (< +${RSS_GROWTH_LIMIT_MB} MB)`,
      verdict(rssLateMb - rssEarlyMb < RSS_GROWTH_LIMIT_MB),
    ],
    [
      'soak: throughput, early vs late quarter (median)',
      `${Math.round(earlyRate)} → ${Math.round(lateRate)} frames/s (${((lateRate / earlyRate) * 100).toFixed(0)} %)`,
      `no slowdown (≥ ${SLOWDOWN_FLOOR * 100} %)`,
      verdict(lateRate >= SLOWDOWN_FLOOR * earlyRate),
    ],
  ];
  return { rows, heapGrowthMb, rssEarlyMb, rssLateMb, earlyRate, lateRate };
}

function serveRows(r: ServeLoadResult): Row[] {
  return [
    [
      `serve: ${r.clients} clients × ${r.rateHz} frames/s for ${r.durationS} s`,
      `${r.framesSent} frames sent (${Math.round(r.sentPerS)}/s), ${r.answers} answered`,
      'every frame answered',
      verdict(r.answers === r.framesSent && r.unanswered === 0),
    ],
    [
      'serve: answers in order (t_s per client), errors',
      `${r.outOfOrder} out of order, ${r.errorAnswers} error answers, ${r.clientErrors.length} socket errors`,
      'all in order, none',
      verdict(r.inOrder && r.errorAnswers === 0 && r.clientErrors.length === 0),
    ],
    [
      'serve: latency send → answer p50 / p90 / p99 / max',
      `${r.latencyMs.p50.toFixed(2)} / ${r.latencyMs.p90.toFixed(2)} / ${r.latencyMs.p99.toFixed(2)} / ${r.latencyMs.max.toFixed(1)} ms`,
      'p99 reported',
      '—',
    ],
    ['serve: exit on SIGTERM', `code ${r.serverExitCode}`, '0', verdict(r.serverExitCode === 0)],
  ];
}

function curveTable(cps: readonly SoakCheckpoint[]): string {
  const header = 'frames      flight h   RSS MB   heap MB   chunk frames/s';
  const lines = cps.map(
    (c) =>
      `${String(c.frames).padStart(9)}   ${c.flightH.toFixed(2).padStart(8)}   ${c.rssMb.toFixed(1).padStart(6)}   ${c.heapUsedMb.toFixed(1).padStart(7)}   ${Math.round(c.chunkFramesPerS).toString().padStart(14)}`,
  );
  return [header, ...lines].join('\n');
}

async function main(): Promise<void> {
  if (typeof (globalThis as { gc?: unknown }).gc !== 'function') {
    process.stderr.write('soak: run with node --expose-gc (npm run soak does) so that memory is sampled after a gc\n');
  }
  // Thresholds lowered for the soak so that every turn of the synthetic pattern raises and clears alerts (its
  // peaks reach about 0.79 of the stall limit and 0.84 of the thrust limit on the demo airframe): events start,
  // end and fill the event log all day long, as on a busy test day.
  const demo = loadAircraftFile(AIRFRAME);
  const aircraft = { ...demo, thresholds: { ...demo.thresholds, ...SOAK_THRESHOLDS } };
  const rows: Row[] = [];
  const results: Record<string, unknown> = { quick, node: process.version, startedAt: new Date().toISOString() };

  if (!process.argv.includes('--no-soak')) {
    process.stdout.write(
      `soak: ${SOAK_FRAMES} frames of ${SOAK_RATE_HZ} Hz telemetry through the live path (RSS and heap after a gc every ${CHECKPOINT_EVERY} frames)\n`,
    );
    process.stdout.write('frames      flight h   RSS MB   heap MB   chunk frames/s\n');
    const recordDir = process.argv.includes('--record') ? mkdtempSync(join(tmpdir(), 'turnmargin-soak-')) : undefined;
    const soak = await runLiveSoak({
      aircraft,
      ...(recordDir ? { recordPath: join(recordDir, 'soak.tmrec') } : {}),
      frames: SOAK_FRAMES,
      rateHz: SOAK_RATE_HZ,
      checkpointEvery: CHECKPOINT_EVERY,
      onCheckpoint: (c) => process.stdout.write(curveTable([c]).split('\n')[1] + '\n'),
    });
    if (recordDir) rmSync(recordDir, { recursive: true, force: true });
    const v = soakVerdicts(soak);
    rows.push(...v.rows);
    if (soak.recordedBytes !== undefined) {
      rows.push([
        'soak: recording (--record)',
        `${(soak.recordedBytes / 2 ** 20).toFixed(0)} MB written, ${soak.recordingError ?? 'no error'}`,
        'every line, no error',
        verdict(soak.recordingError === null && soak.recordedBytes > 0),
      ]);
    }
    results['soak'] = {
      frames: SOAK_FRAMES,
      rateHz: SOAK_RATE_HZ,
      ...soak,
      heapGrowthMb: v.heapGrowthMb,
      rssEarlyMb: v.rssEarlyMb,
      rssLateMb: v.rssLateMb,
      earlyFramesPerS: v.earlyRate,
      lateFramesPerS: v.lateRate,
    };
  }

  if (!process.argv.includes('--no-serve')) {
    process.stdout.write(
      `\nserve under load: ${LOAD.clients} clients × ${LOAD.rateHz} frames/s for ${LOAD.durationS} s on loopback…\n`,
    );
    const load = await runServeLoad({ aircraftPath: AIRFRAME, ...LOAD });
    rows.push(...serveRows(load));
    results['serve'] = load;
  }

  if (!process.argv.includes('--no-flood')) rows.push(...(await runServeFloodRows(AIRFRAME, results)));
  process.stdout.write('\n' + formatTable(rows) + '\n');
  const outDir = join(REPO_ROOT, 'bench-results');
  mkdirSync(outDir, { recursive: true });
  writeFileSync(join(outDir, 'soak.json'), JSON.stringify({ ...results, table: rows }, null, 2) + '\n');
  process.stdout.write('\nwritten: bench-results/soak.json\n');
  if (rows.some((r) => r[3] === 'MISSED')) process.exitCode = 1;
}

main().catch((err: unknown) => {
  process.stderr.write(`soak: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
  process.exitCode = 2;
});
