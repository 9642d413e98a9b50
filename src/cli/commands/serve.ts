/** `turnmargin serve`: answer an autopilot on the bench with margin records over a websocket. */
import { MARGIN_COMPUTATION_OPTIONS, parseMarginOptions } from '../margin-options.js';
import { makeDirectory } from '../../recording/make-directory.js';
import {
  startServeServer,
  DEFAULT_IDLE_TIMEOUT_MS,
  DEFAULT_MAX_CLIENTS,
  PING_INTERVAL_MS,
  type ServeServerOptions,
} from '../../serve/server.js';
import { isLoopbackHost, parseListenAddress } from '../../serve/listen-address.js';
import type { MarginOptions } from '../../core/margins.js';
import { numberOption, requireOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { EXIT_OK, InputError, UsageError } from '../../errors.js';
import { loadAircraftFile, loadThresholdsFile } from '../load.js';
import { systemErrorWords } from '../../system-errors.js';
import { readToken } from '../token-option.js';

export const DEFAULT_LISTEN = '127.0.0.1:8765';

export const spec: CommandSpec = {
  name: 'serve',
  summary: 'answer an autopilot on the bench with margins over a websocket',
  usage:
    'turnmargin serve --aircraft FILE [--listen HOST:PORT [--allow-remote]] [--thresholds FILE]\n' +
    '                        [--token T | --token-file FILE] [--record DIR] [--smooth S] [--rate-window S] [--throttle full|idle] [--max-clients N]\n' +
    '                        [--idle-timeout S]',
  options: [
    { name: 'aircraft', type: 'string', valueName: 'FILE', description: 'airframe model (JSON); required' },
    {
      name: 'listen',
      type: 'string',
      valueName: 'HOST:PORT',
      defaultText: DEFAULT_LISTEN,
      description: 'address to listen on (port 0: a free port, printed at start)',
    },
    {
      name: 'allow-remote',
      type: 'boolean',
      description: 'allow a non-loopback --listen address (reachable from the network; prints a warning)',
    },
    {
      name: 'thresholds',
      type: 'string',
      valueName: 'FILE',
      defaultText: "the airframe's, else 0.80/0.90 stall, 0.80/0.95 structure, 1.00 thrust",
      description: 'alert thresholds (JSON)',
    },
    {
      name: 'token',
      type: 'string',
      valueName: 'T',
      description: 'clients must present this token ("Authorization: Bearer T" header or ?token=T in the URL)',
    },
    {
      name: 'token-file',
      type: 'string',
      valueName: 'FILE',
      description: 'read the token from the first line of a file (keeps it out of the process list)',
    },
    {
      name: 'record',
      type: 'string',
      valueName: 'DIR',
      description: 'keep every line each client sends, one recording file per connection (replay/review read them)',
    },
    ...MARGIN_COMPUTATION_OPTIONS,
    {
      name: 'max-clients',
      type: 'string',
      valueName: 'N',
      defaultText: String(DEFAULT_MAX_CLIENTS),
      description: 'most clients at once (more are refused with HTTP 503)',
    },
    {
      name: 'idle-timeout',
      type: 'string',
      valueName: 'S',
      unit: 's',
      defaultText: String(DEFAULT_IDLE_TIMEOUT_MS / 1000),
      description: 'close a client that sends no complete message for this long (its slot is freed)',
    },
  ],
  notes: [
    'Protocol: send text messages, each holding one frame (the telemetry keys: t_s, tas_mps | cas_mps | ias_mps,\n' +
      'alt_m, bank_deg and/or nz, oat_c?, mass_kg?, throttle?, simulated?) or several frames one per line. Every\n' +
      'frame is answered, in order, with one JSON text message: the margin record (t_s, tas_mps, eas_mps,\n' +
      'density_kg_m3, n_measured, n_stall, n_thrust, n_structural, utilization {stall, thrust, structure},\n' +
      'bank_limit_deg, bank_sustained_deg, level, alerts [{limit, level}], and more). A bad line is answered with\n' +
      '{"error": "<reason>", "code": "<code>", "line": N, "t_s"?} (the codes are listed in README) and the\n' +
      'connection goes on. t_s must increase on each connection; smoothing and alert hysteresis are per connection.',
    'A message over 1 MiB closes that connection with code 1009; other clients are not affected. A client that\n' +
      'does not read its answers (8 MiB pending) is closed with 1008. With --token, a client without the token\n' +
      'is refused with HTTP 401 before the websocket opens.',
    `Idle clients: every ${PING_INTERVAL_MS / 1000} s each client is pinged; one that leaves two pings unanswered is cut off,\n` +
      'and one that sends no complete message for --idle-timeout is closed (1001); either way its slot is freed.',
    'Work is shared fairly: a client flooding the server is served in slices (and held back by TCP while its\n' +
      'messages wait), so the other clients keep getting their answers. A recording the disk refuses (disk full)\n' +
      'is reported in the log; the lines that could not be written are counted per client and in the summary.',
    'At start the server prints "listening on ws://HOST:PORT" to stdout. SIGINT, SIGTERM or SIGHUP: clients are\n' +
      'closed (1001), recordings flushed, a summary goes to stderr, exit 0.',
  ],
};

export async function run(args: ParsedArgs): Promise<number> {
  if (args.positionals.length > 0) throw new UsageError(`unexpected argument "${args.positionals[0]}"`);
  const aircraft = loadAircraftFile(requireOption(args, 'aircraft'));
  const thresholdsPath = stringOption(args, 'thresholds');
  const thresholds =
    thresholdsPath !== undefined ? loadThresholdsFile(thresholdsPath, aircraft.thresholds) : aircraft.thresholds;
  const maxClients = numberOption(args, 'max-clients', DEFAULT_MAX_CLIENTS, { integer: true, min: 1, max: 10_000 });
  const idleTimeoutS = numberOption(args, 'idle-timeout', DEFAULT_IDLE_TIMEOUT_MS / 1000, { min: 0.1, max: 86_400 });
  const listenText = stringOption(args, 'listen') ?? DEFAULT_LISTEN;
  const parsed = parseListenAddress(listenText);
  if (!parsed.ok) throw new UsageError(`--listen ${parsed.reason}`);
  const { host, port } = parsed.value;
  const allowRemote = args.values['allow-remote'] === true;
  const token = readToken(args);
  if (!isLoopbackHost(host)) {
    if (!allowRemote) {
      throw new UsageError(`--listen ${host} is not a loopback address; give --allow-remote to listen on the network`);
    }
    process.stderr.write(
      `turnmargin: warning: listening on ${host}, reachable from the network: ` +
        (token === undefined
          ? 'anyone who can reach this machine can connect (no --token given)\n'
          : 'only clients presenting the token are accepted, but the traffic is not encrypted\n'),
    );
  }
  const recordDir = stringOption(args, 'record');
  if (recordDir !== undefined) {
    try {
      makeDirectory(recordDir);
    } catch (err) {
      const why = systemErrorWords(err, { EEXIST: 'not a directory' });
      throw new InputError([`--record ${recordDir}: cannot use it for recordings (${why})`]);
    }
  }

  const margins: Partial<MarginOptions> = parseMarginOptions(args, thresholds);
  const options: ServeServerOptions = {
    aircraft,
    host,
    port,
    margins,
    maxClients,
    idleTimeoutMs: idleTimeoutS * 1000,
    log: (line) => process.stderr.write(`turnmargin: serve: ${line}\n`),
  };
  if (token !== undefined) options.token = token;
  if (recordDir !== undefined) options.recordDir = recordDir;

  let server;
  try {
    server = await startServeServer(options);
  } catch (err) {
    const why = systemErrorWords(err);
    throw new InputError([`--listen ${listenText}: cannot listen (${why})`]);
  }
  // The handlers are in place before the address is printed: a client script may signal as soon as it reads it.
  const stopped = new Promise<void>((resolve) => {
    const stop = () => {
      process.off('SIGINT', stop);
      process.off('SIGTERM', stop);
      process.off('SIGHUP', stop);
      resolve();
    };
    process.on('SIGINT', stop);
    process.on('SIGTERM', stop);
    // The terminal went away (ssh dropped): stop as cleanly as on SIGTERM, recordings flushed.
    process.on('SIGHUP', stop);
  });
  process.stdout.write(`listening on ${server.url}\n`);
  await stopped;
  const summary = await server.close();
  process.stderr.write(
    `turnmargin: serve: stopped; ${summary.connections} connections, ${summary.answered} frames answered, ` +
      `${summary.errors} errors, ${summary.refused} refused` +
      `${summary.linesNotRecorded ? `, ${summary.linesNotRecorded} lines not recorded` : ''}` +
      `${summary.recordings.length ? `; recordings in ${recordDir}` : ''}\n`,
  );
  return EXIT_OK;
}
