/** Link health of one telemetry source, as shown on the dashboard and summarised at exit in `--no-ui` mode. */

/** 'listening': a connectionless link (UDP) waiting for its first datagram. */
export type LinkState = 'connecting' | 'listening' | 'live' | 'stale' | 'lost' | 'ended';

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
  rejectedByReason: Record<string, number>;
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
