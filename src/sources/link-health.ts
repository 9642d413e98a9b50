/** Link health of one telemetry source, as shown on the dashboard and summarised at exit in `--no-ui` mode. */
import type { RejectCode } from '../decode/rejections.js';

/** No accepted frame for this long on an open link → "stale" (the dashboard marks its data STALE after it too). */
export const STALE_AFTER_S = 1;

/** Rejected lines of one kind: one code (and frame key, when the code names one). */
export interface RejectCount {
  code: RejectCode;
  key: string | null;
  count: number;
  /** The words of the first such line, without its offending value (e.g. "tas_mps must be a number from 0 to 300 m/s"). */
  words: string;
}

export type LinkState = 'connecting' | 'live' | 'stale' | 'lost' | 'ended';

export interface LinkHealth {
  /** Human description of the source, e.g. "serial /dev/ttyUSB0 @ 57600", "ws://…", "file flight.ndjson". */
  source: string;
  state: LinkState;
  framesPerS: number;
  bytesPerS: number;
  /** Lines received (accepted + rejected). */
  lines: number;
  accepted: number;
  rejected: number;
  /** Rejected lines counted by code (and key), most frequent first. */
  rejectedByCode: RejectCount[];
  /** t_s jumps over 0.5 s between accepted frames. */
  gaps: number;
  /** Sender clock restarts detected (new segments). */
  clockRestarts: number;
  /** Seconds since the last accepted frame (receive clock), null before the first. */
  sinceLastFrameS: number | null;
  reconnects: number;
  /** Why the link is lost or ended (e.g. "connection refused"), from the source; null otherwise. */
  stateDetail: string | null;
  recordingFile: string | null;
  recordingBytes: number;
  /** Last recording write error, if any (the monitor keeps running). */
  recordingError: string | null;
}
