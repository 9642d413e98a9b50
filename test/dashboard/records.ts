/** Margin records for the dashboard tests, computed by the real core from frames on the example airframe. */
import type { Aircraft } from '../../src/core/aircraft.js';
import type { LimitEvent } from '../../src/core/events.js';
import type { Frame } from '../../src/core/frame.js';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { createMarginTracker } from '../../src/core/margins.js';
import type { LinkHealth } from '../../src/sources/link-health.js';
import { computeLayout } from '../../src/dashboard/layout.js';
import type { ScreenInput } from '../../src/dashboard/screen-model.js';
import { exampleAirframe } from '../helpers/airframes.js';

export const AIRCRAFT: Aircraft = exampleAirframe();

/** The record after holding one condition for 2 s at 20 frames/s (so the load-factor filter has settled). */
export function steadyRecord(
  frame: Omit<Frame, 'tS' | 'airspeedKind' | 'airspeedMps'> & { tasMps: number },
  aircraft = AIRCRAFT,
): MarginRecord {
  const tracker = createMarginTracker(aircraft);
  let rec: MarginRecord | undefined;
  const { tasMps, ...rest } = frame;
  for (let i = 0; i <= 40; i++) rec = tracker.push({ tS: i * 0.05, airspeedKind: 'tas', airspeedMps: tasMps, ...rest });
  return rec!;
}

export function link(overrides: Partial<LinkHealth> = {}): LinkHealth {
  return {
    source: 'file flight.ndjson',
    state: 'live',
    framesPerS: 20,
    bytesPerS: 1500,
    lines: 100,
    accepted: 98,
    rejected: 2,
    rejectedByCode: [{ code: 'time_not_increasing', key: null, count: 2, words: 'time not increasing' }],
    gaps: 0,
    clockRestarts: 0,
    sinceLastFrameS: 0.05,
    reconnects: 0,
    stateDetail: null,
    recordingFile: null,
    recordingBytes: 0,
    recordingError: null,
    ...overrides,
  };
}

export function event(overrides: Partial<LimitEvent> = {}): LimitEvent {
  return {
    limit: 'stall',
    level: 'caution',
    start_s: 12.5,
    end_s: 14,
    duration_s: 1.5,
    peak_utilization: 0.86,
    peak_t_s: 13.2,
    speed_at_peak_mps: 12.4,
    n_at_peak: 1.6,
    open: false,
    ended_by: overrides.open === true ? null : 'cleared',
    min_time_to_stall_caution_s: null,
    ...overrides,
  };
}

export function screenInput(overrides: Partial<ScreenInput> = {}): ScreenInput {
  return {
    aircraftName: AIRCRAFT.name,
    thresholds: AIRCRAFT.thresholds,
    sourceLabel: 'file flight.ndjson',
    record: null,
    events: [],
    link: link(),
    replay: null,
    isReplay: false,
    ageS: 0.05,
    units: 'mps',
    muted: false,
    error: null,
    ...overrides,
  };
}

export const LAYOUT_80x24 = computeLayout(80, 24);
export const LAYOUT_120x40 = computeLayout(120, 40);
export const LAYOUT_80x24_CARD = computeLayout(80, 24, { card: true });
export const LAYOUT_120x40_CARD = computeLayout(120, 40, { card: true });
