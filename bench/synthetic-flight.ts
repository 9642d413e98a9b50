/**
 * Synthetic telemetry for benchmarks and soak runs: a deterministic weave of turns (load input only — these numbers
 * are a load pattern, not a flight of any aircraft).
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';

/** The i-th frame at a given rate, as an NDJSON line (no newline). */
export function syntheticFrameLine(i: number, rateHz: number): string {
  const t = i / rateHz;
  const bank = 55 * Math.sin(t / 7);
  const tas = 17 + 3 * Math.sin(t / 11);
  const nz = 1 / Math.cos((bank * Math.PI) / 180) + 0.03 * Math.sin(t * 13);
  const alt = 120 + 30 * Math.sin(t / 60);
  return `{"t_s":${t.toFixed(3)},"tas_mps":${tas.toFixed(2)},"alt_m":${alt.toFixed(1)},"bank_deg":${bank.toFixed(2)},"nz":${nz.toFixed(3)}}`;
}

/** Write `frames` lines of NDJSON at `rateHz` to a file; `lineAt` may put another line in place of frame i. */
export async function writeSyntheticFlight(
  path: string,
  frames: number,
  rateHz = 50,
  lineAt?: (i: number) => string | undefined,
): Promise<number> {
  const out = createWriteStream(path);
  let bytes = 0;
  let batch: string[] = [];
  for (let i = 0; i < frames; i++) {
    batch.push(lineAt?.(i) ?? syntheticFrameLine(i, rateHz));
    if (batch.length === 10_000 || i === frames - 1) {
      const text = batch.join('\n') + '\n';
      bytes += Buffer.byteLength(text);
      batch = [];
      if (!out.write(text)) await once(out, 'drain');
    }
  }
  out.end();
  await once(out, 'finish');
  return bytes;
}
