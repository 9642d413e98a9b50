// Test entry: starts the built dashboard with the CLI's crash handlers, feeds it one record from the real core, then throws an uncaught
// exception, to check that the terminal is restored before the error is printed.
import { readFileSync } from 'node:fs';
import { parseAircraft } from '../../dist/src/core/aircraft.js';
import { createMarginTracker } from '../../dist/src/core/margins.js';
import { startDashboard } from '../../dist/src/dashboard/index.js';
import { installCrashHandlers } from '../../dist/src/cli/live.js';

const parsed = parseAircraft(
  JSON.parse(readFileSync(new URL('../fixtures/example-airframe.json', import.meta.url), 'utf8')),
  'example',
);
if (!parsed.ok) throw new Error(parsed.problems.join('\n'));
const aircraft = parsed.value;
const dashboard = startDashboard(
  { aircraft, thresholds: aircraft.thresholds, sourceLabel: 'test entry' },
  { quit: () => process.exit(0) },
);
// The CLI installs these while the dashboard is up (the dashboard itself never touches the process).
installCrashHandlers(() => dashboard.destroy());
const tracker = createMarginTracker(aircraft);
dashboard.pushRecord(tracker.push({ tS: 0, airspeedKind: 'tas', airspeedMps: 20, altM: 100, bankDeg: 30 }));
setTimeout(() => {
  throw new Error('planted failure for the terminal-restore test');
}, 600);
