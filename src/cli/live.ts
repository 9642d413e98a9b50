/**
 * The monitor behind `watch`, `replay` and `demo`: the live pipeline (src/engine/pipeline.ts) with its outputs —
 * one MarginRecord JSON line per accepted frame with --no-ui, or the dashboard; the --events file — signals, the
 * handlers that restore the terminal on a crash, and a clean stop (flush, summary, exit 0).
 */
import { closeSync, openSync, writeSync } from 'node:fs';
import { basename } from 'node:path';
import type { Aircraft } from '../core/aircraft.js';
import { requireOption, stringOption, type OptionSpec, type ParsedArgs } from './args.js';
import { EXIT_UNUSABLE, InputError, UsageError } from '../errors.js';
import { describeOutputError, isClosedPipe } from './output-errors.js';
import { MARGIN_COMPUTATION_OPTIONS, parseMarginOptions } from './margin-options.js';
import { createBoundedOutput, maxPendingStdoutBytes } from './bounded-stdout.js';
import { loadAircraftFile, loadThresholdsFile } from './load.js';
import { checkOutputPath, inputFilesOf } from './output-path.js';
import type { LimitEvent } from '../core/events.js';
import type { MarginOptions } from '../core/margins.js';
import { describeDefaultThresholds, type AlertThresholds } from '../core/thresholds.js';
import { createPipeline, type PipelineSinks } from '../engine/pipeline.js';
import { eventJson } from '../report/review-report.js';
import type { Recorder } from '../recording/recorder.js';
import { formatLinkSummary } from '../sources/link-health-tracker.js';
import type { ReplayTransport, TelemetrySource } from '../sources/source.js';
import type { CardPoint } from '../core/card.js';
import { createLiveCard } from '../dashboard/live-card.js';
import { loadCardFile } from './commands/card.js';

// ---------------------------------------------------------------------------------------------------------------
// The monitor: a pipeline plus its output (headless lines or the dashboard), signals and the exit summary.

type DashboardModule = typeof import('../dashboard/index.js');
type DashboardLike = import('../dashboard/index.js').Dashboard;

export interface MonitorOptions {
  source: TelemetrySource;
  aircraft: Aircraft;
  thresholds: AlertThresholds;
  /** The engine's options beyond the thresholds (smoothing, rate window, throttle assumption). */
  margins?: Partial<MarginOptions>;
  recorder?: Recorder;
  /** Headless: JSON lines on stdout. Otherwise the dashboard (falls back to headless when stdout is not a terminal). */
  noUi: boolean;
  /** For replay: the transport and the flight length promise. */
  replay?: { transport: ReplayTransport; length: Promise<number | null> };
  /** Exit when the source ends (headless replay). Default: true when headless. */
  exitOnEnd?: boolean;
  /** --events: each limit event as one JSON line when it ends. */
  events?: EventsWriter;
  stdout?: NodeJS.WritableStream & { isTTY?: boolean };
  stderr?: NodeJS.WritableStream;
  /** --card: the test card followed live. */
  card?: MonitorCard;
}

/** A test card read for the monitor: its points, the file's name and any warning (made for another airframe). */
export interface MonitorCard {
  points: readonly CardPoint[];
  label: string;
  warnings: readonly string[];
}

const UI_REFRESH_MS = 250;
const SPEED_MIN = 1 / 64;
const SPEED_MAX = 256;

/** The --events file: one JSON line per event when it ends, with the keys of an event in `review --format json`. */
export interface EventsWriter {
  readonly path: string;
  write(ev: LimitEvent): void;
  close(): void;
  /** The first write failure, in words, or null. */
  error(): string | null;
}

/** Open the --events file; refuses an existing one unless `force` (InputError, exit 2). */
export function openEventsFile(path: string, force: boolean): EventsWriter {
  let fd: number | null;
  try {
    fd = openSync(path, force ? 'w' : 'wx');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'EEXIST')
      throw new InputError([`${path}: the events file exists; choose another name or add --force to overwrite it`]);
    throw new InputError([
      `${path}: cannot create the events file (${describeOutputError(err as NodeJS.ErrnoException)})`,
    ]);
  }
  let failure: string | null = null;
  return {
    path,
    write(ev) {
      if (fd === null || failure !== null) return;
      try {
        writeSync(fd, JSON.stringify(eventJson(ev)) + '\n');
      } catch (err) {
        failure = `${path}: cannot write an event (${describeOutputError(err as NodeJS.ErrnoException)})`;
      }
    },
    close() {
      if (fd !== null) closeSync(fd);
      fd = null;
    },
    error: () => failure,
  };
}

/**
 * While the dashboard holds the terminal, an uncaught exception must restore it before the error is printed.
 * Returns the function that takes the handlers off again.
 */
export function installCrashHandlers(restore: () => void, stderr: NodeJS.WritableStream = process.stderr): () => void {
  const onFatal = (err: unknown): void => {
    restore();
    const text = err instanceof Error ? (err.stack ?? err.message) : String(err);
    stderr.write(`turnmargin: unexpected error: ${text}\n`);
    process.exit(EXIT_UNUSABLE);
  };
  process.on('uncaughtException', onFatal);
  process.on('unhandledRejection', onFatal);
  return () => {
    process.off('uncaughtException', onFatal);
    process.off('unhandledRejection', onFatal);
  };
}

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
  const marginOptions: Partial<MarginOptions> = { ...options.margins, thresholds: options.thresholds };

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

  // The card follows the records and the engine's breaks; the record itself is unchanged.
  const liveCard = options.card ? createLiveCard(options.card.points, options.card.label) : undefined;
  const announceAchieved = (): void => {
    for (const p of liveCard?.poll() ?? []) {
      stderr.write(
        `turnmargin: test point ${p.id} achieved: held ${p.longest_hold_s.toFixed(1)} s from t ${p.start_t_s?.toFixed(2)} s` +
          ` (bank ${p.bank_deg.toFixed(1)}°, TAS ${p.tas_mps.toFixed(1)} m/s)\n`,
      );
    }
  };
  const sinks: PipelineSinks = noUi
    ? {
        record(rec) {
          if (!outputBroken) out!.write(JSON.stringify(rec) + '\n');
          if (liveCard) {
            liveCard.push(rec);
            announceAchieved();
          }
        },
        rejected(line, where, reason) {
          const code = line.verdict.ok ? '' : ` [${line.verdict.code}]`;
          stderr.write(`turnmargin: rejected ${where}${code}: ${reason}: ${excerpt(line.text)}\n`);
        },
        status(s) {
          if (s.kind === 'lost') stderr.write(`turnmargin: link lost (${s.detail ?? 'no detail'}); retrying\n`);
          else if (s.kind === 'open' && s.detail && !options.replay)
            stderr.write(`turnmargin: link open: ${s.detail}\n`);
        },
        eventEnded: (ev) => options.events?.write(ev),
        dataBreak: () => liveCard?.breakHere(),
      }
    : {
        record: (rec) => {
          liveCard?.push(rec);
          dashboard?.pushRecord(rec);
        },
        dataBreak: () => liveCard?.breakHere(),
        rejected: () => undefined, // counted in link health, shown by the dashboard
        eventStarted: (ev) => dashboard?.pushEvent(ev),
        eventEnded: (ev) => {
          dashboard?.pushEvent(ev);
          options.events?.write(ev);
        },
        eventsReset: (events) => dashboard?.resetEvents(events),
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
        ...(liveCard ? { card: liveCard, notices: options.card!.warnings } : {}),
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
      if (transport) dashboard?.setReplay(transport.state());
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
  const removeCrashHandlers = dashboard ? installCrashHandlers(() => dashboard?.destroy(), stderr) : undefined;
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
    options.events?.close();
    dashboard?.destroy();
    removeCrashHandlers?.();
  }
  // A reader that has stopped reading must not keep the process alive: wait for it a short while only. A signal
  // during that bounded wait must not kill the process before the summary and the count of records not printed.
  const duringSettle = (): void => undefined;
  for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) process.on(signal, duringSettle);
  const drained = outputBroken || ((await out?.settle(1500)) ?? true);
  for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) process.off(signal, duringSettle);
  out?.close();
  if (!drained && stdout === process.stdout) setTimeout(() => process.exit(process.exitCode ?? 0), 200);
  // After the dashboard has restored the terminal, the summary goes to stderr in both modes.
  stderr.write(formatLinkSummary(pipeline.health()));
  if (out?.dropped()) stderr.write(`turnmargin: stdout too slow: ${out.dropped()} records not printed\n`);
  const eventsFailure = options.events?.error();
  if (eventsFailure) stderr.write(`turnmargin: ${eventsFailure}; later events were not written\n`);
  if (outputFailure !== null) {
    stderr.write(`turnmargin: cannot write the margin records to standard output (${outputFailure}); stopped\n`);
    return EXIT_UNUSABLE;
  }
  return 0;
}

// ---------------------------------------------------------------------------------------------------------------
// Options shared by `watch` and `replay`.

/** --card for the monitor (watch, replay, demo). */
export const MONITOR_CARD_OPTION: OptionSpec = {
  name: 'card',
  type: 'string',
  valueName: 'FILE',
  description:
    'a test card (JSON from `turnmargin card`): the dashboard shows the next point not yet achieved, its deviation and hold timer (n/p step); with --no-ui each point achieved is noted on stderr',
};

export const COMMON_MONITOR_OPTIONS: OptionSpec[] = [
  {
    name: 'aircraft',
    type: 'string',
    valueName: 'FILE',
    description:
      "airframe model (JSON; its vne_mps is a calibrated airspeed, compared with each frame's CAS); required",
  },
  {
    name: 'thresholds',
    type: 'string',
    valueName: 'FILE',
    defaultText: `the airframe's, else ${describeDefaultThresholds()}`,
    description:
      'alert thresholds (JSON): an alert comes on at its threshold and goes off after clear_s below threshold − hysteresis',
  },
  ...MARGIN_COMPUTATION_OPTIONS,
  {
    name: 'no-ui',
    type: 'boolean',
    description:
      'no dashboard: one margin record (JSON) per accepted frame on stdout, rejected lines and a link summary on stderr',
  },
  {
    name: 'events',
    type: 'string',
    valueName: 'FILE',
    description:
      'write each limit event to FILE as one JSON line when it ends (keys as in review --format json, with ended_by)',
  },
  { name: 'force', type: 'boolean', description: 'overwrite an existing --events (or --record) file' },
  MONITOR_CARD_OPTION,
];

/** Read --card for the monitor: refused with every problem listed, a warning when made for another airframe. */
export function loadMonitorCard(path: string | undefined, aircraft: Aircraft): MonitorCard | undefined {
  if (path === undefined) return undefined;
  const warnings: string[] = [];
  const card = loadCardFile(path, aircraft, aircraft.massKg, (line) => warnings.push(line));
  return { points: card.points, label: basename(path), warnings };
}

export interface MonitorSetup {
  aircraft: Aircraft;
  thresholds: AlertThresholds;
  margins: Partial<MarginOptions>;
  noUi: boolean;
  /** --events, opened (call after every other check of the arguments: it creates the file). */
  events?: EventsWriter;
  card?: MonitorCard;
}

export function loadMonitorSetup(args: ParsedArgs): MonitorSetup {
  const aircraft = loadAircraftFile(requireOption(args, 'aircraft'));
  const thresholdsPath = stringOption(args, 'thresholds');
  const thresholds =
    thresholdsPath !== undefined ? loadThresholdsFile(thresholdsPath, aircraft.thresholds) : aircraft.thresholds;
  const setup: MonitorSetup = {
    aircraft,
    thresholds,
    margins: parseMarginOptions(args, thresholds),
    noUi: args.values['no-ui'] === true,
  };
  const card = loadMonitorCard(stringOption(args, 'card'), aircraft);
  if (card) setup.card = card;
  const eventsPath = stringOption(args, 'events');
  if (eventsPath !== undefined) {
    if (eventsPath === '') throw new UsageError('--events FILE must not be empty');
    checkOutputPath({
      option: 'events',
      path: eventsPath,
      force: args.values['force'] === true,
      inputs: inputFilesOf(args),
    });
    setup.events = openEventsFile(eventsPath, args.values['force'] === true);
  }
  return setup;
}
