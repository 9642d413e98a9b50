/**
 * One report over several reviewed flights (`review A B C …`, `check A B …`): a summary per flight (lines, time
 * span, the UTC start and end of a recording, events, peaks), the test points of a card over all flights, then each
 * flight's own review. JSON `{flights: [<per-file review>], test_points?}`, Markdown, CSV and the check summary.
 * Each flight's part is the one-file renderer's output, so one file and several never disagree on a number.
 * Pure: reviews in, text out.
 */
import type { FlightReview } from '../core/flight-review.js';
import type { TestPointResult } from '../core/test-point.js';
import { LIMITS } from '../core/alerts.js';
import { testPointsToCsv, testPointsToMarkdown } from './card-report.js';
import { csvRow, fixed, roundOrNull, roundTo } from './numbers.js';
import {
  ADVISORY_CAUTION,
  checkSummary,
  failingEvents,
  formatUtilization,
  reviewToCsv,
  reviewToJson,
  reviewToMarkdown,
  type FailLevel,
  type ReviewContext,
} from './review-report.js';

/** One flight of a report over several. */
export interface ReportedFlight {
  review: FlightReview;
  ctx: ReviewContext;
  /** The file's name in tables and test points (its base name, or the path when two files share one). */
  label: string;
  /** First and last receive time (ms since the epoch) of a recording's accepted frames; null for other files. */
  received: { firstMs: number; lastMs: number } | null;
}

const utc = (ms: number): string => new Date(ms).toISOString();

/** The receive-time span of a recording, as JSON (UTC, ISO 8601). */
export function receivedUtcJson(received: ReportedFlight['received']): { start: string; end: string } | null {
  return received === null ? null : { start: utc(received.firstMs), end: utc(received.lastMs) };
}

/** A flight's entry in `flights`: its one-file review, plus `received_utc` when the file is a recording. */
export function flightJson(f: ReportedFlight) {
  const json: ReturnType<typeof reviewToJson> & { received_utc?: { start: string; end: string } } = reviewToJson(
    f.review,
    f.ctx,
  );
  const received = receivedUtcJson(f.received);
  if (received !== null) json.received_utc = received;
  return json;
}

export function flightsToJson(flights: readonly ReportedFlight[], testPoints: readonly TestPointResult[] | null) {
  return {
    flights: flights.map(flightJson),
    ...(testPoints !== null ? { test_points: testPoints } : {}),
  };
}

function worstLevel(review: FlightReview): 'normal' | 'caution' | 'warning' {
  if (review.events.some((e) => e.level === 'warning')) return 'warning';
  return review.events.length > 0 ? 'caution' : 'normal';
}

const count = (review: FlightReview, level: 'caution' | 'warning') =>
  review.events.filter((e) => e.level === level).length;

function mdRow(cells: readonly string[]): string {
  return `| ${cells.map((c) => c.replace(/\|/g, '\\|')).join(' | ')} |`;
}

/** The one-file Markdown of a flight one heading level down, without the caution that closes it (said once). */
function flightMarkdown(f: ReportedFlight, index: number): string {
  const cautionBlock = `## Caution\n\n${ADVISORY_CAUTION}\n`;
  let text = reviewToMarkdown(f.review, f.ctx);
  if (text.endsWith(cautionBlock)) text = text.slice(0, -cautionBlock.length);
  return text
    .split('\n')
    .map((line) =>
      line.startsWith('# Flight review: ')
        ? `## Flight ${index + 1}: ${f.ctx.source}`
        : line.startsWith('#')
          ? `#${line}`
          : line,
    )
    .join('\n')
    .trimEnd();
}

export function flightsToMarkdown(
  flights: readonly ReportedFlight[],
  testPoints: readonly TestPointResult[] | null,
  cardName?: string,
): string {
  const first = flights[0]!;
  const a = first.ctx.aircraft;
  const out: string[] = [];
  out.push(`# Flight review: ${flights.length} flights`, '');
  out.push(`- Airframe: **${a.name}** (${first.ctx.aircraftFile})`);
  out.push(`- Files, in the order given: ${flights.map((f) => f.label).join(', ')}`);
  out.push('');

  out.push('## Flights', '');
  out.push(
    mdRow(['#', 'File', 'Lines (accepted / rejected)', 'Time span t (s)', 'Data (s)', 'UTC start', 'UTC end']),
    '|---:|:---|---:|:---|---:|:---|:---|',
  );
  flights.forEach((f, i) => {
    const r = f.review;
    out.push(
      mdRow([
        String(i + 1),
        f.label,
        `${r.frames} (${r.accepted} / ${r.rejected})`,
        r.firstTS === null ? '—' : `${fixed(r.firstTS, 2)} to ${fixed(r.lastTS, 2)}`,
        fixed(r.durationS, 2),
        f.received ? utc(f.received.firstMs) : '—',
        f.received ? utc(f.received.lastMs) : '—',
      ]),
    );
  });
  out.push('');
  if (flights.some((f) => f.received !== null))
    out.push('UTC start and end: the receive times of the first and last accepted frame of a recording.', '');

  out.push('## Events and peaks per flight', '');
  out.push(
    mdRow(['#', 'File', 'Worst level', 'Warning events', 'Caution events', ...LIMITS.map((l) => `Peak ${l}`)]),
    `|---:|:---|:---|---:|---:|${LIMITS.map(() => '---:').join('|')}|`,
  );
  flights.forEach((f, i) => {
    const r = f.review;
    out.push(
      mdRow([
        String(i + 1),
        f.label,
        worstLevel(r).toUpperCase(),
        String(count(r, 'warning')),
        String(count(r, 'caution')),
        ...LIMITS.map((l) =>
          r.peaks[l].t_s === null
            ? formatUtilization(r.peaks[l].utilization)
            : `${formatUtilization(r.peaks[l].utilization)} at ${fixed(r.peaks[l].t_s, 2)} s`,
        ),
      ]),
    );
  });
  out.push('', 'Each flight was reviewed on its own (the computation restarts at the start of every file).', '');

  if (testPoints !== null) {
    out.push(
      testPointsToMarkdown(testPoints, cardName ?? 'card').replace(
        /^## Test points \(/,
        '## Test points over all flights (',
      ),
      'Over all flights: each point counts its longest hold in any file (`file` and `start t_s` say where).',
      '',
    );
  }

  flights.forEach((f, i) => out.push(flightMarkdown(f, i), ''));
  out.push('## Caution', '', ADVISORY_CAUTION, '');
  return out.join('\n');
}

export const FLIGHT_CSV_COLUMNS = [
  'file',
  'frames',
  'accepted',
  'rejected',
  'first_t_s',
  'last_t_s',
  'duration_s',
  'utc_start',
  'utc_end',
  'warning_events',
  'caution_events',
  ...LIMITS.flatMap((l) => [`peak_${l}`, `peak_${l}_t_s`]),
] as const;

/**
 * CSV over several flights, tables separated by a blank line: one row per flight; then each table of the one-file
 * CSV (the events, …) with a leading `file` column and the rows of every flight; then the test points of a card.
 */
export function flightsToCsv(
  flights: readonly ReportedFlight[],
  testPoints: readonly TestPointResult[] | null,
): string {
  const tables: string[] = [];
  const summary = flights.map((f) => {
    const r = f.review;
    const received = receivedUtcJson(f.received);
    return csvRow([
      f.label,
      r.frames,
      r.accepted,
      r.rejected,
      roundOrNull(r.firstTS),
      roundOrNull(r.lastTS),
      roundTo(r.durationS),
      received?.start,
      received?.end,
      count(r, 'warning'),
      count(r, 'caution'),
      ...LIMITS.flatMap((l) => [roundOrNull(r.peaks[l].utilization), roundOrNull(r.peaks[l].t_s)]),
    ]);
  });
  tables.push([FLIGHT_CSV_COLUMNS.join(','), ...summary].join('\n'));

  // The one-file CSV's tables, each merged over the flights.
  const perFlight = flights.map((f) => reviewToCsv(f.review).trimEnd().split('\n\n'));
  const tableCount = Math.max(...perFlight.map((t) => t.length));
  for (let k = 0; k < tableCount; k++) {
    let header: string | undefined;
    const rows: string[] = [];
    flights.forEach((f, i) => {
      const lines = perFlight[i]![k]?.split('\n') ?? [];
      if (lines.length === 0) return;
      header ??= lines[0];
      for (const line of lines.slice(1)) rows.push(`${csvRow([f.label])},${line}`);
    });
    if (header !== undefined) tables.push([`file,${header}`, ...rows].join('\n'));
  }
  if (testPoints !== null) tables.push(testPointsToCsv(testPoints).trimEnd());
  return tables.join('\n\n') + '\n';
}

/** `check` over several flights: each flight's summary, then the verdict over all. */
export function flightsCheckSummary(flights: readonly ReportedFlight[], failOn: FailLevel): string {
  const parts = flights.map((f) => checkSummary(f.review, f.ctx, failOn));
  const failed = flights.filter((f) => failingEvents(f.review, failOn).length > 0);
  const level = `${failOn}${failOn === 'caution' ? ' or warning' : ''}`;
  parts.push(
    failed.length === 0
      ? `ALL PASS: no event reached ${level} in ${flights.length} flights\n`
      : `FAIL: ${failed.length} of ${flights.length} flights had an event that reached ${level} (${failed.map((f) => f.label).join(', ')})\n`,
  );
  return parts.join('\n');
}
