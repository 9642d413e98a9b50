/**
 * The reading side of `review` alone: a telemetry file to packed frame batches (readFramePackedBatches) with a
 * consumer that only counts, to see what reading costs apart from the computation. Prints ms and ns per line.
 * Usage: node dist/bench/read-path.js FILE [runs]
 */
import { readFramePackedBatches } from '../src/decode/read-frames.js';

/** Reads the file once; returns the accepted frames, rejected lines and physical lines seen. */
export async function readPathOnce(
  path: string,
): Promise<{ frames: number; rejected: number; ms: number; cpuMs: number }> {
  const start = process.hrtime.bigint();
  const cpuStart = process.cpuUsage();
  let frames = 0;
  let rejected = 0;
  for await (const batch of readFramePackedBatches(path)) {
    frames += batch.count;
    rejected += batch.rejects.length / 5;
  }
  const cpu = process.cpuUsage(cpuStart);
  return { frames, rejected, ms: Number(process.hrtime.bigint() - start) / 1e6, cpuMs: (cpu.user + cpu.system) / 1e3 };
}

async function main(path: string, runs: number): Promise<void> {
  for (let r = 0; r < runs; r++) {
    const { frames, rejected, ms, cpuMs } = await readPathOnce(path);
    const perLine = (t: number): string => ((t * 1e6) / Math.max(1, frames + rejected)).toFixed(0);
    process.stdout.write(
      `${frames} frames, ${rejected} rejected: ${ms.toFixed(0)} ms wall (${perLine(ms)} ns/line), ` +
        `${cpuMs.toFixed(0)} ms CPU (${perLine(cpuMs)} ns/line)\n`,
    );
  }
}

if (process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/^.*\//, '/'))) {
  void main(process.argv[2] ?? '', Number(process.argv[3] ?? 3));
}
