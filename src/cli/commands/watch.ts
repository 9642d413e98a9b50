/** `turnmargin watch`: live margins from a serial radio or a websocket relay, with recording and link health. */
import { resolve } from 'node:path';
import { openRecorder, type Recorder } from '../../recording/recorder.js';
import { createSerialSource, DEFAULT_BAUD, whyNotASerialPort } from '../../sources/serial.js';
import { createWebSocketSource } from '../../sources/websocket.js';
import type { TelemetrySource } from '../../sources/source.js';
import { numberOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { UsageError } from '../../errors.js';
import { COMMON_MONITOR_OPTIONS, loadMonitorSetup, runMonitor } from '../live.js';

export const spec: CommandSpec = {
  name: 'watch',
  summary: 'monitor live telemetry from a serial radio or a websocket relay',
  usage:
    'turnmargin watch (--serial PATH [--baud N] | --ws URL) --aircraft FILE [--record FILE [--force]] [--thresholds FILE] [--smooth S] [--no-ui]',
  options: [
    {
      name: 'serial',
      type: 'string',
      valueName: 'PATH',
      description: 'serial device of the telemetry radio, e.g. /dev/ttyUSB0',
    },
    {
      name: 'baud',
      type: 'string',
      valueName: 'N',
      unit: 'bit/s',
      defaultText: String(DEFAULT_BAUD),
      description: 'serial speed',
    },
    {
      name: 'ws',
      type: 'string',
      valueName: 'URL',
      description: 'websocket relay, e.g. ws://127.0.0.1:8765/telemetry',
    },
    ...COMMON_MONITOR_OPTIONS,
    {
      name: 'record',
      type: 'string',
      valueName: 'FILE',
      description: 'record every received line (verbatim, with its receive time) to FILE',
    },
    { name: 'force', type: 'boolean', description: 'overwrite an existing recording file' },
  ],
  notes: [
    'Telemetry: one JSON object per line with t_s, one of ias_mps/cas_mps/tas_mps, alt_m, bank_deg and/or nz,\n' +
      'optionally oat_c, mass_kg, throttle and simulated. Bad lines are rejected with a code and a reason,\n' +
      'counted, and kept in the recording.',
    'When the link drops the monitor reports "link lost" and reconnects by itself (first retry within 0.5 s,\n' +
      'then every 2 s at most). Ctrl-C (or q on the dashboard) flushes the recording and exits.',
  ],
};

function sourceFromArgs(args: ParsedArgs): TelemetrySource {
  const serial = stringOption(args, 'serial');
  const ws = stringOption(args, 'ws');
  if (serial !== undefined && ws !== undefined) throw new UsageError('give --serial PATH or --ws URL, not both');
  if (serial === undefined && ws === undefined)
    throw new UsageError('a telemetry link is required: --serial PATH or --ws URL');
  if (serial !== undefined) {
    if (serial === '') throw new UsageError('--serial PATH must not be empty');
    const why = whyNotASerialPort(serial);
    if (why !== null) throw new UsageError(`--serial ${serial} ${why}`);
    const baudRate = numberOption(args, 'baud', DEFAULT_BAUD, { integer: true, min: 50, max: 4_000_000 });
    return createSerialSource({ path: serial, baudRate });
  }
  if (args.values['baud'] !== undefined) throw new UsageError('--baud applies to --serial only');
  let url: URL;
  try {
    url = new URL(ws!);
  } catch {
    throw new UsageError(`--ws must be a websocket URL such as ws://127.0.0.1:8765 (got "${ws}")`);
  }
  if (url.protocol !== 'ws:' && url.protocol !== 'wss:')
    throw new UsageError(`--ws must start with ws:// or wss:// (got "${ws}")`);
  return createWebSocketSource({ url: url.href });
}

export async function run(args: ParsedArgs): Promise<number> {
  if (args.positionals.length > 0) throw new UsageError(`unexpected argument "${args.positionals[0]}"`);
  const source = sourceFromArgs(args);
  const setup = loadMonitorSetup(args);
  const recordPath = stringOption(args, 'record');
  if (args.values['force'] && recordPath === undefined) throw new UsageError('--force applies to --record only');
  let recorder: Recorder | undefined;
  if (recordPath !== undefined) {
    for (const [option, input] of [
      ['aircraft', stringOption(args, 'aircraft')],
      ['thresholds', stringOption(args, 'thresholds')],
    ] as const) {
      if (input !== undefined && resolve(input) === resolve(recordPath)) {
        throw new UsageError(`--record ${recordPath} is the --${option} file: recording there would overwrite it`);
      }
    }
  }
  if (recordPath !== undefined)
    recorder = openRecorder({ path: recordPath, force: args.values['force'] === true, sourceLabel: source.label });
  return runMonitor({ ...setup, source, ...(recorder ? { recorder } : {}) });
}
