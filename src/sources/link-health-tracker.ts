/**
 * Builds LinkHealth from what the pipeline sees. Pure bookkeeping: every call carries the time (receive clock, ms),
 * nothing here reads a clock.
 */
import { rejectionGroupWords, type Rejection } from '../decode/rejections.js';
import { STALE_AFTER_S, type LinkHealth, type LinkState, type RejectCount } from './link-health.js';
import type { SourceStatus } from './source.js';

/** A t_s jump above this between accepted frames counts as a gap. */
const GAP_S = 0.5;
const BUCKET_MS = 100;
const WINDOW_BUCKETS = 10;

export interface LinkHealthTracker {
  status(s: SourceStatus): void;
  /** A line arrived (before judging): counts its bytes. Blank lines count as bytes, not as lines. */
  line(byteCount: number, atMs: number): void;
  accepted(tS: number, atMs: number, newSegment: boolean): void;
  /** A line was rejected: counted by its code (and key). */
  rejected(rejection: Rejection): void;
  /** Recording facts, supplied by the recorder's owner at snapshot time. */
  snapshot(nowMs: number, recording?: { file: string; bytes: number; error: string | null }): LinkHealth;
}

export function createLinkHealthTracker(source: string, startMs: number): LinkHealthTracker {
  let state: LinkState = 'connecting';
  let opens = 0;
  let accepted = 0;
  let rejected = 0;
  // Keyed by code and frame key: codes and keys are finite sets, so the map stays small.
  const rejectedByCode = new Map<string, RejectCount>();
  let gaps = 0;
  let clockRestarts = 0;
  let lastTS: number | undefined;
  let lastFrameMs: number | undefined;
  let openedMs = startMs;
  let stateDetail: string | null = null;
  // Rate buckets: index = floor(ms / BUCKET_MS).
  const bucketIndex = new Array<number>(WINDOW_BUCKETS).fill(-1);
  const bucketFrames = new Array<number>(WINDOW_BUCKETS).fill(0);
  const bucketBytes = new Array<number>(WINDOW_BUCKETS).fill(0);

  function bucket(atMs: number): number {
    const index = Math.floor(atMs / BUCKET_MS);
    const slot = ((index % WINDOW_BUCKETS) + WINDOW_BUCKETS) % WINDOW_BUCKETS;
    if (bucketIndex[slot] !== index) {
      bucketIndex[slot] = index;
      bucketFrames[slot] = 0;
      bucketBytes[slot] = 0;
    }
    return slot;
  }

  return {
    status(s) {
      switch (s.kind) {
        case 'open':
          opens += 1;
          state = 'live';
          openedMs = s.atMs;
          stateDetail = null;
          break;
        case 'lost':
          state = 'lost';
          stateDetail = s.detail ?? null;
          break;
        case 'ended':
          state = 'ended';
          stateDetail = s.detail ?? null;
          break;
        case 'connecting':
          // While retrying after a loss the link stays "lost" for the operator.
          if (state !== 'lost') state = 'connecting';
          break;
        case 'seek':
          lastTS = undefined;
          if (state === 'ended') state = 'live'; // a replay sought back after its end plays again
          break;
      }
    },
    line(byteCount, atMs) {
      bucketBytes[bucket(atMs)]! += byteCount + 1;
    },
    accepted(tS, atMs, newSegment) {
      accepted += 1;
      if (newSegment) clockRestarts += 1;
      else if (lastTS !== undefined && tS - lastTS > GAP_S) gaps += 1;
      lastTS = tS;
      lastFrameMs = atMs;
      bucketFrames[bucket(atMs)]! += 1;
    },
    rejected(r) {
      rejected += 1;
      const id = r.key === undefined ? r.code : `${r.code} ${r.key}`;
      const group = rejectedByCode.get(id);
      if (group) group.count += 1;
      else rejectedByCode.set(id, { code: r.code, key: r.key ?? null, count: 1, words: rejectionGroupWords(r) });
    },
    snapshot(nowMs, recording) {
      // Rates over the last whole buckets only (the current one is still filling): a steady stream reads its true
      // rate instead of dipping by up to one bucket's share.
      const current = Math.floor(nowMs / BUCKET_MS);
      const fullBuckets = Math.max(1, Math.min(WINDOW_BUCKETS - 1, current - Math.floor(startMs / BUCKET_MS)));
      let frames = 0;
      let bytes = 0;
      for (let i = 0; i < WINDOW_BUCKETS; i++) {
        const index = bucketIndex[i]!;
        if (index >= current - fullBuckets && index < current) {
          frames += bucketFrames[i]!;
          bytes += bucketBytes[i]!;
        }
      }
      const windowS = (fullBuckets * BUCKET_MS) / 1000;
      let shown = state;
      const quietSinceMs = Math.max(lastFrameMs ?? openedMs, openedMs);
      if (state === 'live' && nowMs - quietSinceMs > STALE_AFTER_S * 1000) shown = 'stale';
      return {
        source,
        state: shown,
        framesPerS: frames / windowS,
        bytesPerS: bytes / windowS,
        lines: accepted + rejected,
        accepted,
        rejected,
        rejectedByCode: [...rejectedByCode.values()].map((g) => ({ ...g })).sort((a, b) => b.count - a.count),
        gaps,
        clockRestarts,
        sinceLastFrameS: lastFrameMs === undefined ? null : Math.max(0, (nowMs - lastFrameMs) / 1000),
        reconnects: Math.max(0, opens - 1),
        stateDetail: shown === 'lost' || shown === 'ended' ? stateDetail : null,
        recordingFile: recording?.file ?? null,
        recordingBytes: recording?.bytes ?? 0,
        recordingError: recording?.error ?? null,
      };
    },
  };
}

/** The `--no-ui` exit summary: a few plain lines for stderr. */
export function formatLinkSummary(h: LinkHealth): string {
  const lines = [
    `link summary — ${h.source}: ${h.state}`,
    `  lines ${h.lines}, accepted ${h.accepted}, rejected ${h.rejected}, gaps ${h.gaps}, clock restarts ${h.clockRestarts}, reconnects ${h.reconnects}`,
    `  ${h.framesPerS.toFixed(1)} frames/s, ${h.bytesPerS.toFixed(0)} bytes/s (last seconds); ` +
      (h.sinceLastFrameS === null ? 'no frame received' : `last frame ${h.sinceLastFrameS.toFixed(2)} s ago`),
  ];
  for (const g of h.rejectedByCode) lines.push(`  rejected ${g.count}× [${g.code}] ${g.words}`);
  if (h.recordingFile)
    lines.push(
      `  recording ${h.recordingFile}: ${h.recordingBytes} bytes${h.recordingError ? ` — ${h.recordingError}` : ''}`,
    );
  return lines.join('\n') + '\n';
}
