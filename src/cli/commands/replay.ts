/** `turnmargin replay`: play a recorded flight (recording, NDJSON or CSV log) through the monitor, paced by t_s. */
import { closeSync, openSync, readSync, statSync } from 'node:fs';
import { checkMappingFits } from '../../decode/read-frames.js';
import { createReplay } from '../../engine/replay.js';
import { numberOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { InputError, UsageError } from '../../errors.js';
import { COMMON_MONITOR_OPTIONS, loadMonitorSetup, runMonitor } from '../live.js';

export const spec: CommandSpec = {
  name: 'replay',
  summary: 'play a recorded flight through the monitor',
  usage:
    'turnmargin replay FILE --aircraft FILE [--speed X] [--mapping FILE] [--thresholds FILE] [--smooth S] [--rate-window S] [--throttle full|idle] [--card CARD.json] [--no-ui] [--events FILE [--force]]',
  options: [
    {
      name: 'speed',
      type: 'string',
      valueName: 'X',
      unit: '× real time',
      defaultText: '1',
      description: 'playback speed: 1 = real time, 2 = twice as fast, 0 = as fast as possible',
    },
    {
      name: 'mapping',
      type: 'string',
      valueName: 'FILE',
      description:
        'column mapping (JSON) for a CSV log with a header line: which column feeds which frame key, in which unit',
    },
    { name: 'loop', type: 'boolean', defaultText: 'off', description: 'start again at the end (dashboard only)' },
    ...COMMON_MONITOR_OPTIONS,
  ],
  notes: [
    'FILE is a turnmargin recording (watch --record), NDJSON (one frame per line) or CSV with a header of frame\n' +
      'keys (# comment lines allowed); a mapping file reads logs with other column names and units.',
    'Dashboard keys: q quit, space pause, + and − speed, ← → seek 10 s, m mute the bell, u speed units, c clear the trail,\n' +
      'n and p next/previous test point (with --card), ? all keys.',
  ],
};

/**
 * The flight file must be readable now: a file that cannot be opened or read (permissions, a directory, an I/O
 * error) is refused with its name and exit 2 rather than played as an empty flight.
 */
function refuseUnreadable(path: string): void {
  let fd: number | undefined;
  try {
    const stats = statSync(path);
    if (stats.isDirectory()) throw new InputError([`${path}: cannot read the flight file (is a directory)`]);
    if (!stats.isFile()) return; // a pipe is read as it comes; a probe would take its first byte
    fd = openSync(path, 'r');
    readSync(fd, Buffer.alloc(1), 0, 1, 0);
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError([`${path}: cannot read the flight file (${describeReadError(err as NodeJS.ErrnoException)})`]);
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}

function describeReadError(err: NodeJS.ErrnoException): string {
  switch (err.code) {
    case 'ENOENT':
      return 'no such file';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EIO':
      return 'input/output error';
    default:
      return err.message;
  }
}

export async function run(args: ParsedArgs): Promise<number> {
  const [path, ...extra] = args.positionals;
  if (path === undefined) throw new UsageError('the flight file is required: turnmargin replay FILE --aircraft FILE');
  if (extra.length > 0) throw new UsageError(`unexpected argument "${extra[0]}"`);
  refuseUnreadable(path);
  const speed = numberOption(args, 'speed', 1, { min: 0, max: 1000 });
  const mappingPath = stringOption(args, 'mapping');
  if (mappingPath !== undefined) await checkMappingFits(path, mappingPath); // report a bad mapping before starting
  const setup = loadMonitorSetup(args);
  const wantsUi = !setup.noUi && process.stdout.isTTY === true;
  if (args.values['loop'] === true && !wantsUi) {
    process.stderr.write(
      'turnmargin: note: --loop applies to the dashboard only; without it the file is played once\n',
    );
  }
  const source = createReplay({
    path,
    speed,
    scanLength: wantsUi,
    loop: wantsUi && args.values['loop'] === true,
    ...(mappingPath !== undefined ? { mappingPath } : {}),
  });
  return runMonitor({ ...setup, source, replay: { transport: source, length: source.length() } });
}
