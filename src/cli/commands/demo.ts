/**
 * `turnmargin demo` (`npm start`): replays the bundled demo flight with the demo airframe through the same live
 * pipeline as `replay`, looping, so a newcomer sees the dashboard work with no hardware. Both files are an
 * invented scenario (replays/README.md).
 */
import { existsSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createReplay } from '../../engine/replay.js';
import { numberOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { InputError } from '../../errors.js';
import { loadMonitorCard, MONITOR_CARD_OPTION, runMonitor } from '../live.js';
import { MARGIN_COMPUTATION_OPTIONS, parseMarginOptions } from '../margin-options.js';
import { loadAircraftFile } from '../load.js';

export const spec: CommandSpec = {
  name: 'demo',
  summary: 'replay the bundled demo flight with the demo airframe on the dashboard, looping (npm start)',
  usage:
    'turnmargin demo [--speed X] [--card CARD.json] [--smooth S] [--rate-window S] [--throttle full|idle] [--no-ui]',
  options: [
    ...MARGIN_COMPUTATION_OPTIONS,
    {
      name: 'speed',
      type: 'string',
      valueName: 'X',
      defaultText: '1 (real time)',
      description: 'replay speed; + and − change it on the dashboard',
    },
    {
      name: 'no-ui',
      type: 'boolean',
      description: 'print the margin records of one pass as JSON lines instead of the dashboard',
    },
    MONITOR_CARD_OPTION,
  ],
  notes: [
    'The demo airframe and flight (replays/) are an invented scenario: no real aircraft is described.',
    'Keys: q quit, space pause, + and − speed, ← → seek 10 s, m mute the bell, u speed units, c clear the trail,\n' +
      'n and p next/previous test point (with --card), ? all keys. Without a terminal (stdout piped) the demo\n' +
      'prints one pass as JSON lines.',
  ],
};

export const DEMO_FLIGHT = 'demo-flight.ndjson';
export const DEMO_AIRFRAME = 'demo-airframe.json';

/** The replays/ folder of the installed package: searched upward from this module (works from src/ and dist/). */
export function findReplaysDir(startDir = dirname(fileURLToPath(import.meta.url))): string | null {
  let dir = resolve(startDir);
  for (;;) {
    const candidate = join(dir, 'replays');
    if (existsSync(join(candidate, DEMO_AIRFRAME))) return candidate;
    const parent = dirname(dir);
    if (parent === dir) return null;
    dir = parent;
  }
}

export async function run(args: ParsedArgs): Promise<number> {
  const replays = findReplaysDir();
  if (replays === null || !existsSync(join(replays, DEMO_FLIGHT))) {
    throw new InputError([
      `demo: the bundled demo files (replays/${DEMO_AIRFRAME}, replays/${DEMO_FLIGHT}) are missing from this installation`,
    ]);
  }
  const aircraft = loadAircraftFile(join(replays, DEMO_AIRFRAME));
  const speed = numberOption(args, 'speed', 1, { min: 0, max: 256 });
  const card = loadMonitorCard(stringOption(args, 'card'), aircraft);
  const headless = args.values['no-ui'] === true || !process.stdout.isTTY;
  if (headless && args.values['no-ui'] !== true) {
    process.stderr.write(
      'turnmargin demo: stdout is not a terminal, so no dashboard: printing one pass of the demo flight as JSON lines.\n' +
        'Run `npm start` (or `turnmargin demo`) in a terminal to see the dashboard.\n',
    );
  }
  const source = createReplay({
    path: join(replays, DEMO_FLIGHT),
    speed: headless ? 0 : speed,
    scanLength: !headless,
    loop: !headless,
  });
  return runMonitor({
    source,
    aircraft,
    thresholds: aircraft.thresholds,
    margins: parseMarginOptions(args, aircraft.thresholds),
    noUi: headless,
    exitOnEnd: headless,
    ...(card ? { card } : {}),
    ...(headless ? {} : { replay: { transport: source, length: source.length() } }),
  });
}
