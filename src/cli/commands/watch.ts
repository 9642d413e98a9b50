/** `turnmargin watch`: live margins from a serial radio, a websocket relay or UDP datagrams, with recording and link health. */
import { existsSync } from 'node:fs';
import { openRecorder, type Recorder } from '../../recording/recorder.js';
import { isLoopbackHost, parseListenAddress } from '../../serve/listen-address.js';
import { DEFAULT_BAUD, NO_SUCH_PORT_YET, whyNotASerialPort } from '../../sources/serial-path.js';
import { createUdpSource, freeUdpPort } from '../../sources/udp.js';
import { redactUrl } from '../../sources/redact-url.js';
import type { TelemetrySource } from '../../sources/source.js';
import { numberOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { UsageError } from '../../errors.js';
import { COMMON_MONITOR_OPTIONS, loadMonitorSetup, runMonitor } from '../live.js';
import { checkOutputPath, inputFilesOf } from '../output-path.js';

export const DEFAULT_UDP_HOST = '127.0.0.1';
import { readToken } from '../token-option.js';

export const spec: CommandSpec = {
  name: 'watch',
  summary: 'monitor live telemetry from a serial radio, a websocket relay or UDP datagrams',
  usage:
    'turnmargin watch (--serial PATH [--baud N] | --ws URL [--token T | --token-file FILE] | --udp [HOST:]PORT\n' +
    '                        [--allow-remote]) --aircraft FILE [--record FILE] [--events FILE] [--force]\n' +
    '                        [--thresholds FILE] [--smooth S] [--rate-window S] [--throttle full|idle]\n' +
    '                        [--card CARD.json] [--no-ui]',
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
    {
      name: 'udp',
      type: 'string',
      valueName: '[HOST:]PORT',
      defaultText: `host ${DEFAULT_UDP_HOST}`,
      description: 'receive UDP datagrams of complete lines on this address (port 0: a free port, printed)',
    },
    {
      name: 'allow-remote',
      type: 'boolean',
      description: 'allow --udp on a non-loopback address (anyone on the network can send)',
    },
    {
      name: 'token',
      type: 'string',
      valueName: 'T',
      description: 'with --ws: send "Authorization: Bearer T" (never shown or recorded)',
    },
    {
      name: 'token-file',
      type: 'string',
      valueName: 'FILE',
      description: 'with --ws: read the token from the first line of a file (keeps it out of the process list)',
    },
    ...COMMON_MONITOR_OPTIONS,
    {
      name: 'record',
      type: 'string',
      valueName: 'FILE',
      description: 'record every received line (verbatim, with its receive time) to FILE',
    },
  ],
  notes: [
    'Telemetry: one JSON object per line with t_s, one of ias_mps/cas_mps/tas_mps, alt_m, bank_deg and/or nz,\n' +
      'optionally oat_c, mass_kg, throttle and simulated. Bad lines are rejected with a code and a reason,\n' +
      'counted, and kept in the recording.',
    'When the link drops the monitor reports "link lost" and reconnects by itself (first retry within 0.5 s,\n' +
      'then every 2 s at most). A serial port that does not exist yet is waited for. A websocket sender that\n' +
      'closes normally (code 1000, e.g. the simulator at the end of its flight) ends the link: no retry.\n' +
      'Ctrl-C (or q on the dashboard) flushes the recording and exits.',
    'UDP: each datagram holds one or more complete lines (at most 64 KiB); a line never spans two datagrams.\n' +
      'The link shows LISTENING until the first datagram, then LIVE, and STALE when nothing arrives for 1 s.',
  ],
};

/** `--udp [HOST:]PORT`: a bare port listens on 127.0.0.1. */
function udpAddress(text: string, allowRemote: boolean): { host: string; port: number } {
  const parsed = /^\d+$/.test(text.trim())
    ? parseListenAddress(`:${text.trim()}`, DEFAULT_UDP_HOST)
    : parseListenAddress(text, DEFAULT_UDP_HOST);
  if (!parsed.ok) throw new UsageError(`--udp ${parsed.reason.replace('HOST:PORT', '[HOST:]PORT')}`);
  const { host } = parsed.value;
  if (!isLoopbackHost(host)) {
    if (!allowRemote)
      throw new UsageError(`--udp ${host} is not a loopback address; give --allow-remote to receive from the network`);
    process.stderr.write(
      `turnmargin: warning: receiving UDP on ${host}: anyone who can reach this machine can send frames\n`,
    );
  }
  return parsed.value;
}

/** The link, and a note to print once everything else is checked. Only the chosen link's driver is loaded. */
async function sourceFromArgs(args: ParsedArgs): Promise<{ source: TelemetrySource; note?: string }> {
  const serial = stringOption(args, 'serial');
  const ws = stringOption(args, 'ws');
  const udp = stringOption(args, 'udp');
  const given = [serial !== undefined && '--serial', ws !== undefined && '--ws', udp !== undefined && '--udp'].filter(
    Boolean,
  );
  if (given.length > 1) throw new UsageError(`give one telemetry link (got ${given.join(' and ')})`);
  if (given.length === 0)
    throw new UsageError('a telemetry link is required: --serial PATH, --ws URL or --udp [HOST:]PORT');
  if (args.values['baud'] !== undefined && serial === undefined)
    throw new UsageError('--baud applies to --serial only');
  if (args.values['allow-remote'] === true && udp === undefined)
    throw new UsageError('--allow-remote applies to --udp only');
  if (serial !== undefined) {
    if (args.values['token'] !== undefined || args.values['token-file'] !== undefined)
      throw new UsageError('--token and --token-file apply to --ws only');
    if (serial === '') throw new UsageError('--serial PATH must not be empty');
    const why = whyNotASerialPort(serial);
    if (why !== null) throw new UsageError(`--serial ${serial} ${why}`);
    const baudRate = numberOption(args, 'baud', DEFAULT_BAUD, { integer: true, min: 50, max: 4_000_000 });
    // Said at once, not after a failed open: a radio not plugged in yet is normal, a typo is not.
    const note = existsSync(serial) ? undefined : `${serial}: ${NO_SUCH_PORT_YET}`;
    const { createSerialSource } = await import('../../sources/serial.js');
    return { source: createSerialSource({ path: serial, baudRate }), ...(note ? { note } : {}) };
  }
  if (udp !== undefined) {
    const address = udpAddress(udp, args.values['allow-remote'] === true);
    // Port 0: the system's free port, chosen now so that every place that names the link names the real port.
    const port = address.port === 0 ? ((await freeUdpPort(address.host)) ?? 0) : address.port;
    return { source: createUdpSource({ ...address, port }) };
  }
  let url: URL;
  try {
    url = new URL(ws!);
  } catch {
    throw new UsageError(`--ws must be a websocket URL such as ws://127.0.0.1:8765 (got "${redactUrl(ws!)}")`);
  }
  if (url.protocol !== 'ws:' && url.protocol !== 'wss:')
    throw new UsageError(`--ws must start with ws:// or wss:// (got "${redactUrl(ws!)}")`);
  const token = readToken(args);
  const { createWebSocketSource } = await import('../../sources/websocket.js');
  return { source: createWebSocketSource({ url: url.href, ...(token !== undefined ? { token } : {}) }) };
}

export async function run(args: ParsedArgs): Promise<number> {
  if (args.positionals.length > 0) throw new UsageError(`unexpected argument "${args.positionals[0]}"`);
  const { source, note } = await sourceFromArgs(args);
  const setup = loadMonitorSetup(args);
  const recordPath = stringOption(args, 'record');
  if (args.values['force'] && recordPath === undefined && stringOption(args, 'events') === undefined)
    throw new UsageError('--force applies to --record and --events only');
  let recorder: Recorder | undefined;
  if (recordPath !== undefined) {
    const force = args.values['force'] === true;
    checkOutputPath({ option: 'record', path: recordPath, force, inputs: inputFilesOf(args) });
    recorder = openRecorder({ path: recordPath, force, sourceLabel: source.label });
  }
  if (note !== undefined) process.stderr.write(`turnmargin: ${note}\n`);
  return runMonitor({ ...setup, source, ...(recorder ? { recorder } : {}) });
}
