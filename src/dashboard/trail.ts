/**
 * The trail of recent (speed, load factor) points on the n–V plane, kept by data time (t_s), thinned so a
 * 1 kHz stream keeps a bounded number of points. No clock: times come from the records.
 */
export interface TrailPoint {
  tS: number;
  tasMps: number;
  n: number;
}

export interface TrailOptions {
  /** How far back the trail reaches, s. Default 10. */
  windowS: number;
  /** Points closer in time than this to the last kept one are skipped, s. Default 0.05. */
  minSpacingS: number;
}

export const DEFAULT_TRAIL: TrailOptions = { windowS: 10, minSpacingS: 0.05 };

export interface Trail {
  push(p: TrailPoint): void;
  clear(): void;
  /** Points within the window of the newest one, oldest first. */
  points(): readonly TrailPoint[];
}

export function createTrail(options: TrailOptions = DEFAULT_TRAIL): Trail {
  let pts: TrailPoint[] = [];
  return {
    push(p) {
      const last = pts[pts.length - 1];
      // Time went back (a seek, a restart of the sender's clock): the old trail no longer connects.
      if (last && p.tS < last.tS) pts = [];
      // Thinned: the dot itself is drawn from the newest record, so a skipped point loses nothing visible.
      else if (last && p.tS - last.tS < options.minSpacingS) return;
      pts.push(p);
      const from = p.tS - options.windowS;
      let drop = 0;
      while (drop < pts.length && pts[drop]!.tS < from) drop++;
      if (drop > 0) pts = pts.slice(drop);
    },
    clear() {
      pts = [];
    },
    points() {
      return pts;
    },
  };
}
