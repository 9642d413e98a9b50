/** Builders for telemetry frame lines used across the ingest tests (values are the example airframe's range). */

export interface FrameFields {
  t_s: number;
  /** Any other key, of any type (bad inputs included). */
  [key: string]: unknown;
}

/** One NDJSON frame line (no newline): a steady turn at 20 m/s TAS, 100 m, 30° bank unless overridden. */
export function frameLine(fields: FrameFields): string {
  return JSON.stringify({ tas_mps: 20, alt_m: 100, bank_deg: 30, ...fields });
}

/** `count` frames from t = startS every stepS, seq in `seq` so each line is unique. */
export function frameLines(count: number, startS = 0, stepS = 0.01, firstSeq = 0): string[] {
  return Array.from({ length: count }, (_, i) =>
    frameLine({ t_s: Number((startS + i * stepS).toFixed(6)), seq: firstSeq + i }),
  );
}
