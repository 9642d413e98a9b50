/**
 * The live pipeline behind `watch` and `replay`: source → recorder → decoder → margin tracker → sinks
 * (one MarginRecord JSON line per accepted frame with --no-ui, or the dashboard), with link health, signals and
 * a clean stop (flush, summary, exit 0).
 */
import type { Aircraft } from '../core/aircraft.js';
import { numberOption, requireOption, stringOption, type OptionSpec, type ParsedArgs } from './args.js';
import { EXIT_UNUSABLE } from '../errors.js';
import { describeOutputError, isClosedPipe } from './output-errors.js';
import { createBoundedOutput, maxPendingStdoutBytes } from './bounded-stdout.js';
import { loadAircraftFile, loadThresholdsFile } from './load.js';
import { createEventTracker, type LimitEvent } from '../core/events.js';
import type { MarginRecord } from '../core/margin-record.js';
import { createMarginTracker, type MarginOptions } from '../core/margins.js';
import type { AlertThresholds } from '../core/thresholds.js';
import { createFrameDecoder, type DecodedLine } from '../decode/frame-decoder.js';
import type { FileLine } from '../decode/read-frames.js';
import type { Recorder } from '../recording/recorder.js';
import type { LinkHealth } from '../sources/link-health.js';
import { createLinkHealthTracker, formatLinkSummary } from '../sources/link-health-tracker.js';
import {
  systemClock,
  type Clock,
  type ReceivedLine,
  type ReplayTransport,
  type SourceStatus,
  type TelemetrySource,
} from '../sources/source.js';

export interface PipelineSinks {
  record(rec: MarginRecord, line: DecodedLine): void;
  /** `where`: "line N" for a file, "line N (received <time>)" for a recording, "line N at <receive time>" live. */
  rejected(line: DecodedLine, where: string, reason: string): void;
  eventStarted?(ev: LimitEvent): void;
  eventEnded?(ev: LimitEvent): void;
  status?(s: SourceStatus): void;
}

export interface PipelineOptions {
  source: TelemetrySource;
  aircraft: Aircraft;
  margins?: Partial<MarginOptions>;
  recorder?: Recorder;
  sinks: PipelineSinks;
  clock?: Clock;
}

export interface Pipeline {
  start(): void;
  /** Resolves when a finite source has ended. */
  readonly ended: Promise<void>;
  /** Stop the source, flush and close the recording; returns every limit event (open ones closed). */
  stop(): Promise<LimitEvent[]>;
  health(): LinkHealth;
}

function isoTime(ms: number): string {
  return new Date(ms).toISOString();
}

export function createPipeline(options: PipelineOptions): Pipeline {
  const clock = options.clock ?? systemClock;
  const { source, recorder, sinks } = options;
  const decoder = createFrameDecoder();
  const margins = createMarginTracker(options.aircraft, options.margins);
  const events = createEventTracker();
  const health = createLinkHealthTracker(source.label, clock());
  let opens = 0;
  let resolveEnded!: () => void;
  const ended = new Promise<void>((resolve) => (resolveEnded = resolve));
  let stopped = false;

  const breakData = (): void => {
    // A break in the data (reconnect, seek, clock restart): filters restart, open events close at their last frame.
    margins.reset();
    for (const ev of events.closeOpen()) sinks.eventEnded?.(ev);
  };

  function onLine(line: ReceivedLine): void {
    recorder?.writeLine(line); // before parsing: the recording holds every line received
    health.line(line.bytes.length, line.receivedAtMs);
    const decoded: (DecodedLine & Partial<Pick<FileLine, 'afterReconnect'>>) | null =
      line.decoded ?? decoder.judgeLine(line);
    if (!decoded) return;
    const verdict = decoded.verdict;
    if (!verdict.ok) {
      health.rejected(verdict.reason);
      const recordedAtMs = (decoded as FileLine).receivedAtMs; // a line replayed from a recording keeps its receive time
      const where = !line.decoded
        ? `line ${decoded.lineNo} at ${isoTime(line.receivedAtMs)}`
        : recordedAtMs !== undefined
          ? `line ${decoded.lineNo} (received ${isoTime(recordedAtMs)})`
          : `line ${decoded.lineNo}`;
      sinks.rejected(decoded, where, verdict.reason);
      return;
    }
    if (decoded.newSegment || decoded.afterReconnect) breakData();
    health.accepted(verdict.frame.tS, line.receivedAtMs, decoded.newSegment === true);
    const rec = margins.push(verdict.frame);
    const change = events.push(rec);
    for (const ev of change.ended) sinks.eventEnded?.(ev);
    sinks.record(rec, decoded);
    for (const ev of change.started) sinks.eventStarted?.(ev);
  }

  function onStatus(status: SourceStatus): void {
    recorder?.writeStatus(status);
    health.status(status);
    if (status.kind === 'open') {
      opens += 1;
      if (opens > 1) {
        decoder.resetTime(); // the time check starts afresh after a reconnect
        breakData();
      }
    } else if (status.kind === 'seek') {
      breakData();
    } else if (status.kind === 'lost') {
      breakData();
    }
    sinks.status?.(status);
    if (status.kind === 'ended') resolveEnded();
  }

  return {
    start() {
      source.start({ onLine, onStatus });
    },
    ended,
    async stop() {
      if (!stopped) {
        stopped = true;
        await source.stop();
        recorder?.writeStatus({ kind: 'ended', atMs: clock(), detail: 'monitor stopped' });
        recorder?.close();
      }
      return events.finish();
    },
    health() {
      return health.snapshot(
        clock(),
        recorder ? { file: recorder.path, bytes: recorder.bytesWritten(), error: recorder.error() } : undefined,
      );
    },
  };
}

// ---------------------------------------------------------------------------------------------------------------
// The monitor: a pipeline plus its output (headless lines or the dashboard), signals and the exit summary.

type DashboardModule = typeof import('../dashboard/index.js');
type DashboardLike = import('../dashboard/index.js').Dashboard;

export interface MonitorOptions {
  source: TelemetrySource;
  aircraft: Aircraft;
  thresholds: AlertThresholds;
  smoothTauS?: number;
  recorder?: Recorder;
  /** Headless: JSON lines on stdout. Otherwise the dashboard (falls back to headless when stdout is not a terminal). */
  noUi: boolean;
  /** For replay: the transport and the flight length promise. */
  replay?: { transport: ReplayTransport; length: Promise<number | null> };
  /** Exit when the source ends (headless replay). Default: true when headless. */
  exitOnEnd?: boolean;
  stdout?: NodeJS.WritableStream & { isTTY?: boolean };
  stderr?: NodeJS.WritableStream;
}

const UI_REFRESH_MS = 250;
const SPEED_MIN = 1 / 64;
const SPEED_MAX = 256;

function excerpt(text: string): string {
  const cut = text.length > 60 ? `${text.slice(0, 57)}...` : text;
  return JSON.stringify(cut);
}

/** Run until the source ends (headless replay), the user quits, or SIGINT/SIGTERM. Returns the exit code (0). */
export async function runMonitor(options: MonitorOptions): Promise<number> {
  const stdout = options.stdout ?? process.stdout;
  const stderr = options.stderr ?? process.stderr;
  let noUi = options.noUi;
  if (!noUi && !stdout.isTTY) {
    stderr.write('turnmargin: stdout is not a terminal: printing margin records as JSON lines (as with --no-ui)\n');
    noUi = true;
  }
  let dashboardModule: DashboardModule | undefined;
  if (!noUi) {
    try {
      // Loaded only here, so that headless runs never load the terminal UI libraries.
      dashboardModule = await import('../dashboard/index.js');
    } catch (err) {
      stderr.write(`turnmargin: the dashboard cannot start (${(err as Error).message}); printing JSON lines instead\n`);
      noUi = true;
    }
  }
  const marginOptions: Partial<MarginOptions> = { thresholds: options.thresholds };
  if (options.smoothTauS !== undefined) marginOptions.smoothTauS = options.smoothTauS;

  let dashboard: DashboardLike | undefined;
  let finish!: () => void;
  const finished = new Promise<void>((resolve) => (finish = resolve));
  let outputBroken = false;
  // A slow stdout reader never grows memory without end: records beyond the bound are counted, not printed.
  const out = noUi
    ? createBoundedOutput(stdout, {
        maxPendingBytes: maxPendingStdoutBytes(),
        report: (text) => stderr.write(`turnmargin: ${text}\n`),
      })
    : undefined;

  const sinks: PipelineSinks = noUi
    ? {
        record(rec) {
          if (!outputBroken) out!.write(JSON.stringify(rec) + '\n');
        },
        rejected(line, where, reason) {
          stderr.write(`turnmargin: rejected ${where}: ${reason}: ${excerpt(line.text)}\n`);
        },
        status(s) {
          if (s.kind === 'lost') stderr.write(`turnmargin: link lost (${s.detail ?? 'no detail'}); retrying\n`);
          else if (s.kind === 'open' && s.detail && !options.replay)
            stderr.write(`turnmargin: link open: ${s.detail}\n`);
        },
      }
    : {
        record: (rec) => dashboard?.pushRecord(rec),
        rejected: () => undefined, // counted in link health, shown by the dashboard
        eventStarted: (ev) => dashboard?.pushEvent(ev),
        eventEnded: (ev) => dashboard?.pushEvent(ev),
      };

  const pipeline = createPipeline({
    source: options.source,
    aircraft: options.aircraft,
    margins: marginOptions,
    sinks,
    ...(options.recorder ? { recorder: options.recorder } : {}),
  });

  let refresh: NodeJS.Timeout | undefined;
  let lastRecordingError: string | null = null;
  let lastRecordingReportMs = 0;
  let lastRecordingText: string | null = null;
  if (dashboardModule) {
    const mod = dashboardModule;
    const lengthS = options.replay
      ? ((await Promise.race([options.replay.length, new Promise<null>((r) => setTimeout(() => r(null), 2000))])) ?? 0)
      : undefined;
    const transport = options.replay?.transport;
    dashboard = mod.startDashboard(
      {
        aircraft: options.aircraft,
        thresholds: options.thresholds,
        sourceLabel: options.source.label,
        ...(lengthS !== undefined ? { replay: { lengthS } } : {}),
      },
      {
        quit: () => finish(),
        ...(transport
          ? {
              togglePause: () => transport.togglePause(),
              changeSpeed: (factor: number) => {
                const s = transport.state().speed;
                // From "as fast as possible" (0), faster stays there and slower drops to the fastest paced speed.
                if (s === 0) {
                  if (factor < 1) transport.setSpeed(SPEED_MAX);
                  return;
                }
                transport.setSpeed(Math.min(SPEED_MAX, Math.max(SPEED_MIN, s * factor)));
              },
              seekBy: (deltaS: number) => transport.seekBy(deltaS),
            }
          : {}),
      },
    );
    refresh = setInterval(() => {
      const h = pipeline.health();
      dashboard?.setLink(h);
      // Once per kind of problem in the event log; the link panel shows the running count of lines not written.
      const kind = h.recordingError?.replace(/\d+ lines/, 'N lines') ?? null;
      if (h.recordingError && kind !== lastRecordingError) dashboard?.showError(h.recordingError);
      lastRecordingError = kind;
      if (transport) {
        const st = transport.state();
        dashboard?.setReplay({ positionS: st.positionS, lengthS: st.lengthS ?? 0, speed: st.speed, paused: st.paused });
      }
    }, UI_REFRESH_MS);
  } else if (options.recorder) {
    refresh = setInterval(() => {
      const err = options.recorder!.error();
      // The count of lines not written changes often: repeat it at most every 5 s.
      const kind = err?.replace(/\d+ lines/, 'N lines') ?? null;
      if (err && (kind !== lastRecordingError || Date.now() - lastRecordingReportMs >= 5000)) {
        if (err !== lastRecordingText) stderr.write(`turnmargin: ${err}; the monitor keeps running\n`);
        lastRecordingReportMs = Date.now();
        lastRecordingText = err;
      }
      lastRecordingError = kind;
    }, UI_REFRESH_MS);
    refresh.unref();
  }

  // Handlers go on once the dashboard (if any) is up, and come off in the finally below.
  let outputFailure: string | null = null;
  const onOutputError = (err: NodeJS.ErrnoException): void => {
    // The reader went away (`| head`): stop cleanly rather than crash. Any other failure (disk full) is reported.
    outputBroken = true;
    if (!isClosedPipe(err)) outputFailure = describeOutputError(err);
    finish();
  };
  stdout.on('error', onOutputError);
  const onSignal = (): void => finish();
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  process.on('SIGHUP', onSignal);

  const exitOnEnd = options.exitOnEnd ?? noUi;
  void pipeline.ended.then(() => {
    if (exitOnEnd) finish();
  });

  try {
    pipeline.start();
    await finished;
  } finally {
    if (refresh) clearInterval(refresh);
    process.off('SIGINT', onSignal);
    process.off('SIGTERM', onSignal);
    process.off('SIGHUP', onSignal);
    stdout.off('error', onOutputError);
    await pipeline.stop();
    dashboard?.destroy();
  }
  // A reader that has stopped reading must not keep the process alive: wait for it a short while only.
  const drained = outputBroken || ((await out?.settle(1500)) ?? true);
  out?.close();
  if (!drained && stdout === process.stdout) setTimeout(() => process.exit(process.exitCode ?? 0), 200);
  // After the dashboard has restored the terminal, the summary goes to stderr in both modes.
  stderr.write(formatLinkSummary(pipeline.health()));
  if (out?.dropped()) stderr.write(`turnmargin: stdout too slow: ${out.dropped()} records not printed\n`);
  if (outputFailure !== null) {
    stderr.write(`turnmargin: cannot write the margin records to standard output (${outputFailure}); stopped\n`);
    return EXIT_UNUSABLE;
  }
  return 0;
}

// ---------------------------------------------------------------------------------------------------------------
// Options shared by `watch` and `replay`.

export const COMMON_MONITOR_OPTIONS: OptionSpec[] = [
  { name: 'aircraft', type: 'string', valueName: 'FILE', description: 'airframe model (JSON); required' },
  {
    name: 'thresholds',
    type: 'string',
    valueName: 'FILE',
    defaultText: "the airframe's, else 0.80/0.90 stall, 0.80/0.95 structure, 1.00 thrust",
    description: 'alert thresholds (JSON)',
  },
  {
    name: 'smooth',
    type: 'string',
    valueName: 'S',
    unit: 's',
    defaultText: '0.15',
    description: 'time constant of the load-factor low-pass filter (0 = off)',
  },
  {
    name: 'no-ui',
    type: 'boolean',
    description:
      'no dashboard: one margin record (JSON) per accepted frame on stdout, rejected lines and a link summary on stderr',
  },
];

export interface MonitorSetup {
  aircraft: Aircraft;
  thresholds: AlertThresholds;
  smoothTauS?: number;
  noUi: boolean;
}

export function loadMonitorSetup(args: ParsedArgs): MonitorSetup {
  const aircraft = loadAircraftFile(requireOption(args, 'aircraft'));
  const thresholdsPath = stringOption(args, 'thresholds');
  const thresholds =
    thresholdsPath !== undefined ? loadThresholdsFile(thresholdsPath, aircraft.thresholds) : aircraft.thresholds;
  const smoothTauS = numberOption(args, 'smooth', undefined, { min: 0, max: 10 });
  const setup: MonitorSetup = { aircraft, thresholds, noUi: args.values['no-ui'] === true };
  if (smoothTauS !== undefined) setup.smoothTauS = smoothTauS;
  return setup;
}
