// Test entry: feeds the built dashboard 1 000 margin records per second (from the real core) for 3 s of data,
// TAS rising from 15 to 25 m/s, then stops. Quits with exit 0 on q. Used to check that a fast stream only
// updates what is drawn (the screen shows the newest record) and that keys still work meanwhile.
import { readFileSync } from 'node:fs';
import { parseAircraft } from '../../dist/src/core/aircraft.js';
import { createMarginTracker } from '../../dist/src/core/margins.js';
import { startDashboard } from '../../dist/src/dashboard/index.js';

const parsed = parseAircraft(
  JSON.parse(readFileSync(new URL('../fixtures/example-airframe.json', import.meta.url), 'utf8')),
  'example',
);
if (!parsed.ok) throw new Error(parsed.problems.join('\n'));
const aircraft = parsed.value;
const tracker = createMarginTracker(aircraft);
let dashboard;
let timer;
dashboard = startDashboard(
  { aircraft, thresholds: aircraft.thresholds, sourceLabel: 'flood 1 kHz' },
  {
    quit: () => {
      clearInterval(timer);
      dashboard.destroy();
      process.stdout.write(`flood entry: ${sent} records pushed\n`);
      process.exit(0);
    },
  },
);
const TOTAL = 3000; // 3 s at 1 kHz
let sent = 0;
const started = Date.now();
timer = setInterval(() => {
  // Catch up with the wall clock: on average 1 000 records per second, in bursts.
  const due = Math.min(TOTAL, Math.floor(Date.now() - started));
  for (; sent < due; sent++) {
    const tS = sent / 1000;
    dashboard.pushRecord(
      tracker.push({ tS, airspeedKind: 'tas', airspeedMps: 15 + (10 * sent) / (TOTAL - 1), altM: 100, bankDeg: 30 }),
    );
  }
  if (sent >= TOTAL) clearInterval(timer);
}, 5);
