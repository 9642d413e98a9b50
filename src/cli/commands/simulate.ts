/**
 * `turnmargin simulate`: fly a plan with the point-mass model (src/sim) and emit telemetry frames — to a file or
 * stdout as fast as possible, or live at the frame rate on a serial line, a pseudo-terminal or a websocket server,
 * so that the monitor can be tried without an aircraft.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createSocket } from 'node:dgram';
import { statSync } from 'node:fs';
import { isIPv6 } from 'node:net';
import { basename } from 'node:path';
import { createInterface } from 'node:readline';
import type { Aircraft } from '../../core/aircraft.js';
import { createFrameWriter, type SimFrame } from '../../sim/frames.js';
import { parseFlightPlan, planDurationS, type FlightPlan } from '../../sim/plan.js';
import { SimulationError, simulateFlight, type SimSample } from '../../sim/point-mass.js';
import { formatWsUrl, isLoopbackHost, parseListenAddress } from '../../serve/listen-address.js';
import { numberOption, requireOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { describeOutputError, isClosedPipe } from '../output-errors.js';
import { checkOutputPath, createOutputFile, inputFilesOf } from '../output-path.js';
import { DEFAULT_BAUD } from '../../sources/serial-path.js';
import { formatUdpAddress } from '../../sources/udp.js';
import { EXIT_OK, EXIT_UNUSABLE, InputError, UsageError } from '../../errors.js';
import { loadAircraftFile, readJson } from '../load.js';
import { cardToFlightPlan } from '../../sim/card-plan.js';
import { loadCardFile } from './card.js';

const DEFAULT_RATE_HZ = 10;

export const spec: CommandSpec = {
  name: 'simulate',
  summary: 'fly a turn plan with a point-mass model and emit telemetry frames',
  usage:
    'turnmargin simulate --aircraft FILE (--plan PLAN.json | --card CARD.json) [--rate HZ] [--seed N]\n' +
    '                           [--out FILE [--force] | --serial PATH [--baud N] | --pty | --ws-listen HOST:PORT\n' +
    '                            | --udp HOST:PORT] [--speed X] [--start-delay S] [--loop] [--quiet]',
  options: [
    { name: 'aircraft', type: 'string', valueName: 'FILE', description: 'airframe model (JSON); required' },
    {
      name: 'plan',
      type: 'string',
      valueName: 'FILE',
      description: 'flight plan (JSON): start state and segments (see below); this or --card is required',
    },
    {
      name: 'card',
      type: 'string',
      valueName: 'FILE',
      description: 'fly a test card (JSON from `turnmargin card`) in its order instead of a plan',
    },
    {
      name: 'rate',
      type: 'string',
      valueName: 'HZ',
      unit: 'Hz',
      defaultText: String(DEFAULT_RATE_HZ),
      description: 'frame rate',
    },
    {
      name: 'seed',
      type: 'string',
      valueName: 'N',
      defaultText: '1',
      description: 'seed of the measurement noise (same seed, same frames)',
    },
    {
      name: 'out',
      type: 'string',
      valueName: 'FILE',
      defaultText: 'stdout',
      description: 'write NDJSON frames to a file, as fast as possible',
    },
    { name: 'force', type: 'boolean', description: 'overwrite an existing --out file' },
    {
      name: 'serial',
      type: 'string',
      valueName: 'PATH',
      description: 'stream live to an existing serial device or pseudo-terminal (e.g. one end of a socat pair)',
    },
    {
      name: 'baud',
      type: 'string',
      valueName: 'N',
      unit: 'bit/s',
      defaultText: String(DEFAULT_BAUD),
      description: 'baud rate for --serial',
    },
    {
      name: 'pty',
      type: 'boolean',
      description:
        'create a pseudo-terminal (needs python3), print its path and stream live to it once a program opens it',
    },
    {
      name: 'ws-listen',
      type: 'string',
      valueName: 'HOST:PORT',
      description:
        'stream live as a websocket server (port 0: a free port); starts when the first client connects and closes\n' +
        'with code 1000 "end of flight" at the end (1001 when interrupted)',
    },
    {
      name: 'udp',
      type: 'string',
      valueName: 'HOST:PORT',
      description: 'stream live as UDP datagrams (one frame line each) to HOST:PORT, e.g. watch --udp PORT',
    },
    {
      name: 'start-delay',
      type: 'string',
      valueName: 'S',
      unit: 's',
      defaultText: 'wait for a reader (--pty, --ws-listen); 0 otherwise',
      description: 'start flying after S seconds at the latest, whether or not a reader is there',
    },
    {
      name: 'allow-remote',
      type: 'boolean',
      description: 'allow --ws-listen on a non-loopback address (anyone on the network can connect)',
    },
    {
      name: 'speed',
      type: 'string',
      valueName: 'X',
      defaultText: '1 (real time)',
      description: 'time scale of live streaming (2 = twice as fast)',
    },
    {
      name: 'loop',
      type: 'boolean',
      description: 'live streaming: fly the plan again and again (time keeps increasing) until interrupted',
    },
    { name: 'quiet', type: 'boolean', description: 'no segment summary on stderr' },
  ],
  notes: [
    'Plan (JSON): {"start": {"alt_m", "tas_mps", "heading_deg"?, "t_s"?}, "segments": [...], "mass_kg"?,\n' +
      '"isa_deviation_c"?, "airspeed_key"? ("tas_mps" | "cas_mps" | "ias_mps"), "roll_rate_dps"? (45),\n' +
      '"noise"? {"nz_sd" (0.02 g), "airspeed_sd_mps" (0.15), "alt_sd_m" (0)}}. Segment types, each with "duration_s":\n' +
      '  straight      wings level; "vertical_speed_mps"? for a climb (> 0) or descent (< 0)\n' +
      '  turn          "bank_deg" (negative = left) or "load_factor" with "direction"? left|right;\n' +
      '                "vertical_speed_mps"? makes it a climbing or descending turn\n' +
      '  speed_change  "to_tas_mps" (autothrottle, idle to full thrust, no airbrake); "bank_deg"?\n' +
      '  pull_up       wings level at "load_factor"\n' +
      '  glide         throttle 0, the path holds "tas_mps"? (default: the entry speed) by descending; "bank_deg"?\n' +
      'Any segment: "label" (written as "segment" in each frame), and "throttle" (0…1 of the thrust available)\n' +
      'or "tas_mps" (speed to hold); by default the autothrottle holds the speed the segment began with.',
    "The model: a point mass with dV/dt = (T − D)/m − g·sin γ, the airframe's thrust model and drag polar at the\n" +
      'flown CL = n·W/(q·S), density from ISA at the flown altitude, a simple autopilot (roll-rate-limited bank,\n' +
      'load factor to hold the vertical path, autothrottle), lift capped at CLmax. Frames carry t_s, the airspeed,\n' +
      'alt_m, bank_deg, nz (with seeded noise on nz, the airspeed and alt_m), heading_deg, throttle (fraction of the\n' +
      'thrust available in use), segment and "simulated": true.',
    'With --card, the points of a test card (`turnmargin card --format json`) are flown in order: straight at the\n' +
      "target speed, roll in, hold hold_s + 1 s (full throttle where the card's turn is not sustainable: the speed\n" +
      'bleeds), roll out; each frame carries segment = the point id.',
    'The model ignores: pitch dynamics (the load factor changes at once), sideslip and uncoordinated flight, wind\n' +
      'and turbulence, the stall itself (the wing holds CLmax instead of departing), engine and propeller lag,\n' +
      "battery or fuel mass change, ground effect and the Earth's curvature. It is a test stimulus, not a flight\n" +
      'model of any real aircraft.',
    'Live outputs are paced in real time (see --speed); --out and stdout are written as fast as possible.',
  ],
};

function loadPlanFile(path: string): FlightPlan {
  const json = readJson(path, 'plan');
  const result = parseFlightPlan(json, basename(path));
  if (!result.ok) throw new InputError(result.problems);
  return result.value;
}

function loadCardPlan(path: string, aircraft: Aircraft): FlightPlan {
  const result = cardToFlightPlan(loadCardFile(path, aircraft), aircraft, { name: basename(path) });
  if (!result.ok) throw new InputError(result.problems);
  return result.value;
}

/** Per-segment summary, so a plan author sees what the airframe actually did. */
interface SegmentSummary {
  label: string;
  startS: number;
  endS: number;
  tasStartMps: number;
  tasEndMps: number;
  tasMinMps: number;
  altStartM: number;
  altEndM: number;
  nMax: number;
  nMin: number;
  liftLimitedS: number;
}

function summarize(
  samples: Iterable<SimSample>,
  plan: FlightPlan,
  periodS: number,
): { summaries: SegmentSummary[]; frames: number } {
  const summaries: SegmentSummary[] = [];
  let frames = 0;
  for (const s of samples) {
    frames++;
    let cur = summaries[summaries.length - 1];
    if (!cur || summaries.length - 1 !== s.segmentIndex) {
      cur = {
        label: plan.segments[s.segmentIndex]!.label,
        startS: s.tS,
        endS: s.tS,
        tasStartMps: s.tasMps,
        tasEndMps: s.tasMps,
        tasMinMps: s.tasMps,
        altStartM: s.altM,
        altEndM: s.altM,
        nMax: s.loadFactor,
        nMin: s.loadFactor,
        liftLimitedS: 0,
      };
      summaries.push(cur);
    }
    cur.endS = s.tS;
    cur.tasEndMps = s.tasMps;
    cur.tasMinMps = Math.min(cur.tasMinMps, s.tasMps);
    cur.altEndM = s.altM;
    cur.nMax = Math.max(cur.nMax, s.loadFactor);
    cur.nMin = Math.min(cur.nMin, s.loadFactor);
    if (s.liftLimited) cur.liftLimitedS += periodS;
  }
  return { summaries, frames };
}

function formatSummary(plan: FlightPlan, aircraft: Aircraft, summaries: SegmentSummary[], frames: number): string {
  const head = `simulated "${plan.name}" with "${aircraft.name}": ${frames} frames, ${planDurationS(plan).toFixed(1)} s`;
  const labelWidth = Math.max(...summaries.map((s) => s.label.length));
  const rows = summaries.map((s) => {
    const cols = [
      s.label.padEnd(labelWidth),
      `${s.startS.toFixed(1).padStart(6)}–${s.endS.toFixed(1).padEnd(6)} s`,
      `TAS ${s.tasStartMps.toFixed(1).padStart(5)}→${s.tasEndMps.toFixed(1).padEnd(5)} m/s`,
      `alt ${s.altStartM.toFixed(0).padStart(5)}→${s.altEndM.toFixed(0).padEnd(5)} m`,
      `n ${s.nMin.toFixed(2)}…${s.nMax.toFixed(2)}`,
    ];
    if (s.liftLimitedS > 0) cols.push(`at CLmax for ${s.liftLimitedS.toFixed(1)} s`);
    return `  ${cols.join('  ')}`;
  });
  return [head, ...rows].join('\n') + '\n';
}

/** The frames of one pass through the plan (or endless passes with --loop), as NDJSON lines. */
function* frameLines(
  aircraft: Aircraft,
  plan: FlightPlan,
  rateHz: number,
  seed: number,
  loop: boolean,
): Generator<{ tS: number; line: string }> {
  const periodS = 1 / rateHz;
  const passS = planDurationS(plan) + periodS;
  for (let pass = 0; ; pass++) {
    const passPlan: FlightPlan = { ...plan, startTS: plan.startTS + pass * passS };
    const write = createFrameWriter(aircraft, passPlan, { seed: (seed + pass) >>> 0 });
    for (const sample of simulateFlight(aircraft, passPlan, { rateHz })) {
      const frame: SimFrame = write(sample);
      yield { tS: sample.tS, line: JSON.stringify(frame) };
    }
    if (!loop) return;
  }
}

/** Where live frames go: a line at a time; `close` flushes and releases. */
interface LiveSink {
  describe: string;
  /** Resolves when someone is there to read (a program opened the pseudo-terminal, a client connected). */
  ready?: Promise<void>;
  /** What is being waited for, e.g. "a program to open /dev/pts/4". */
  waitingFor?: string;
  write(line: string): Promise<void>;
  /** `interrupted`: stopped by a signal rather than at the end of the flight. */
  close(interrupted: boolean): Promise<void>;
}

function writeAsync(stream: NodeJS.WritableStream, text: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const ok = stream.write(text, (err) => (err ? reject(err) : undefined));
    if (ok) resolve();
    else stream.once('drain', resolve);
  });
}

async function openSerialSink(path: string, baudRate: number): Promise<LiveSink> {
  let isDevice: boolean;
  try {
    isDevice = statSync(path).isCharacterDevice();
  } catch {
    throw new InputError([`${path}: no such serial device or pseudo-terminal`]);
  }
  if (!isDevice) throw new InputError([`${path}: not a serial device or pseudo-terminal (use --out for a file)`]);
  const { SerialPort } = await import('serialport');
  const port = new SerialPort({ path, baudRate, autoOpen: false });
  await new Promise<void>((resolve, reject) =>
    port.open((err) => (err ? reject(new InputError([`${path}: cannot open (${err.message})`])) : resolve())),
  );
  let lost: Error | null = null;
  port.on('close', (err: Error | null) => {
    if (err) lost = err;
  });
  port.on('error', (err: Error) => {
    lost = err;
  });
  return {
    describe: `serial ${path} @ ${baudRate}`,
    write(line) {
      if (lost) return Promise.reject(new InputError([`${path}: serial line lost (${lost.message})`]));
      return new Promise((resolve, reject) => {
        port.write(line, (err) =>
          err ? reject(new InputError([`${path}: write failed (${err.message})`])) : undefined,
        );
        port.drain((err) => (err ? reject(new InputError([`${path}: write failed (${err.message})`])) : resolve()));
      });
    },
    close: () => new Promise((resolve) => (port.isOpen ? port.close(() => resolve()) : resolve())),
  };
}

/**
 * A python3 helper owns the pseudo-terminal. Until a program opens the port it keeps only the master side, which
 * then reports a hang-up: when that clears, a reader is there ("reader" on stdout), and the helper opens the port
 * itself so a monitor may come and go. When nobody reads, it drops the backlog instead of blocking, like a radio
 * link nobody listens to. Ctrl-C reaches the helper too (same process group): it ignores it and ends when its
 * input closes, so no traceback is printed.
 */
const PTY_HELPER = `
import os, pty, select, signal, sys, tty, fcntl, termios
signal.signal(signal.SIGINT, signal.SIG_IGN)
master, slave = pty.openpty()
tty.setraw(slave)
name = os.ttyname(slave)
os.close(slave)
held = None
fl = fcntl.fcntl(master, fcntl.F_GETFL)
fcntl.fcntl(master, fcntl.F_SETFL, fl | os.O_NONBLOCK)
sys.stdout.write(name + "\\n")
sys.stdout.flush()
hangup = select.poll()
hangup.register(master, select.POLLIN)
def reader_there():
    return not any(ev & select.POLLHUP for _, ev in hangup.poll(0))
def put(data):
    try:
        n = os.write(master, data)
    except (BlockingIOError, OSError):
        n = 0
    if n < len(data) and held is not None:
        termios.tcflush(held, termios.TCIFLUSH)
        try:
            os.write(master, data[n:])
        except (BlockingIOError, OSError):
            pass
try:
    while True:
        ready, _, _ = select.select([0], [], [], 0.02)
        if held is None and reader_there():
            held = os.open(name, os.O_RDWR | os.O_NOCTTY)
            sys.stdout.write("reader\\n")
            sys.stdout.flush()
        if ready:
            data = os.read(0, 65536)
            if not data:
                break
            if held is not None:
                put(data)
        if held is not None:
            try:
                os.read(master, 65536)
            except (BlockingIOError, OSError):
                pass
except (KeyboardInterrupt, BrokenPipeError):
    pass
`;

async function openPtySink(): Promise<LiveSink & { path: string }> {
  const child: ChildProcess = spawn('python3', ['-c', PTY_HELPER], { stdio: ['pipe', 'pipe', 'inherit'] });
  const rl = createInterface({ input: child.stdout! });
  const path = await new Promise<string>((resolve, reject) => {
    child.once('error', (err) =>
      reject(new InputError([`--pty needs python3 (${err.message}); or give --serial PATH of a socat pair`])),
    );
    rl.once('line', (line) => resolve(line.trim()));
    child.once('exit', (code) =>
      reject(new InputError([`the pseudo-terminal helper (python3) exited with code ${code}`])),
    );
  });
  const ready = new Promise<void>((resolve) => rl.on('line', (line) => line.trim() === 'reader' && resolve()));
  const stdin = child.stdin!;
  stdin.on('error', () => undefined);
  return {
    path,
    describe: `pseudo-terminal ${path}`,
    ready,
    waitingFor: `a program to open ${path}`,
    write: (line) => writeAsync(stdin, line),
    close: () =>
      new Promise((resolve) => {
        rl.close();
        if (child.exitCode !== null) return resolve();
        child.once('exit', () => resolve());
        stdin.end();
      }),
  };
}

/** The --ws-listen address, checked before the flight is simulated (a usage slip costs no work). */
function wsListenAddress(hostPort: string, allowRemote: boolean): { host: string; port: number } {
  const parsed = parseListenAddress(hostPort);
  if (!parsed.ok) throw new UsageError(`--ws-listen ${parsed.reason}`);
  const { host } = parsed.value;
  if (!isLoopbackHost(host) && !allowRemote)
    throw new UsageError(`--ws-listen ${host} is not a loopback address; give --allow-remote to listen on the network`);
  return parsed.value;
}

async function openWsSink(hostPort: string, address: { host: string; port: number }): Promise<LiveSink> {
  const { host, port } = address;
  if (!isLoopbackHost(host))
    process.stderr.write(`turnmargin: warning: listening on ${host}: anyone who can reach this machine can connect\n`);
  const { WebSocketServer, WebSocket } = await import('ws');
  const wss = new WebSocketServer({ host, port, maxPayload: 64 * 1024 });
  await new Promise<void>((resolve, reject) => {
    wss.once('listening', () => resolve());
    wss.once('error', (err) => reject(new InputError([`--ws-listen ${hostPort}: cannot listen (${err.message})`])));
  });
  wss.on('error', () => undefined);
  const realPort = (wss.address() as { port: number }).port;
  process.stdout.write(`listening on ${formatWsUrl(host, realPort)}\n`);
  // Clients only receive; anything they send is ignored.
  wss.on('connection', (ws) => ws.on('error', () => undefined));
  const ready = new Promise<void>((resolve) => wss.once('connection', () => resolve()));
  return {
    describe: `websocket ${formatWsUrl(host, realPort)}`,
    ready,
    waitingFor: 'the first client to connect',
    async write(line) {
      for (const ws of wss.clients) if (ws.readyState === WebSocket.OPEN) ws.send(line);
    },
    // 1000 "end of flight" tells a monitor the stream is over (it shows ENDED and does not retry); an interrupted
    // simulator is going away (1001): a monitor keeps retrying, as for a relay that restarts.
    close: (interrupted) =>
      new Promise<void>((resolve) => {
        for (const ws of wss.clients) {
          if (interrupted) ws.close(1001, 'simulator stopped');
          else ws.close(1000, END_OF_FLIGHT);
        }
        setTimeout(() => {
          for (const ws of wss.clients) ws.terminate();
          wss.close(() => resolve());
        }, 200).unref();
      }),
  };
}

/** The reason of the websocket close at the normal end of a simulated flight. */
export const END_OF_FLIGHT = 'end of flight';

/** UDP: each frame line is one datagram, sent to HOST:PORT (no connection, no reader to wait for). */
/** The --udp destination, checked before the flight is simulated (a usage slip costs no work). */
function udpDestination(hostPort: string): { host: string; port: number } {
  const parsed = parseListenAddress(hostPort);
  if (!parsed.ok) throw new UsageError(`--udp ${parsed.reason}`);
  if (parsed.value.port === 0) throw new UsageError('--udp needs the port the receiver listens on (not 0)');
  return parsed.value;
}

async function openUdpSink(hostPort: string, destination: { host: string; port: number }): Promise<LiveSink> {
  const { host, port } = destination;
  const socket = createSocket(isIPv6(host) ? 'udp6' : 'udp4');
  let failure: Error | null = null;
  socket.on('error', (err) => (failure = err));
  return {
    describe: `udp ${formatUdpAddress(host, port)}`,
    write: (line) =>
      new Promise((resolve, reject) => {
        if (failure) return reject(new InputError([`--udp ${hostPort}: cannot send (${failure.message})`]));
        socket.send(line, port, host, (err) => {
          // Nobody listening (ICMP refused) is normal for a datagram link: the frame is simply lost.
          if (err && (err as NodeJS.ErrnoException).code !== 'ECONNREFUSED')
            return reject(new InputError([`--udp ${hostPort}: cannot send (${err.message})`]));
          resolve();
        });
      }),
    close: () => new Promise((resolve) => socket.close(() => resolve())),
  };
}

function sleep(ms: number, signal: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    if (signal.aborted) return resolve();
    const timer = setTimeout(done, Math.max(0, ms));
    function done() {
      clearTimeout(timer);
      signal.removeEventListener('abort', done);
      resolve();
    }
    signal.addEventListener('abort', done, { once: true });
  });
}

/**
 * The flight starts when a reader is there (the sink says when), or after --start-delay seconds at the latest; a
 * sink that cannot tell (serial, UDP) starts after the delay (none by default).
 */
async function waitForReader(sink: LiveSink, startDelayS: number | undefined, signal: AbortSignal): Promise<void> {
  if (sink.ready === undefined) {
    if (startDelayS !== undefined) await sleep(startDelayS * 1000, signal);
    return;
  }
  const giveUp = new AbortController();
  const onAbort = (): void => giveUp.abort();
  signal.addEventListener('abort', onAbort, { once: true });
  const timer = startDelayS !== undefined ? setTimeout(onAbort, startDelayS * 1000) : undefined;
  process.stderr.write(
    `turnmargin: waiting for ${sink.waitingFor ?? 'a reader'}` +
      (startDelayS !== undefined ? ` (at most ${startDelayS} s)` : '') +
      '; the flight starts then\n',
  );
  try {
    await Promise.race([
      sink.ready,
      new Promise<void>((resolve) => giveUp.signal.addEventListener('abort', () => resolve(), { once: true })),
    ]);
  } finally {
    clearTimeout(timer);
    signal.removeEventListener('abort', onAbort);
  }
}

/** Stream frames in real time (scaled by `speed`) until the plan ends or the signal aborts. */
async function streamLive(
  lines: Iterable<{ tS: number; line: string }>,
  sink: LiveSink,
  speed: number,
  signal: AbortSignal,
): Promise<number> {
  let count = 0;
  let t0: number | null = null;
  const wall0 = performance.now();
  for (const { tS, line } of lines) {
    if (signal.aborted) break;
    if (t0 === null) t0 = tS;
    await sleep(wall0 + ((tS - t0) * 1000) / speed - performance.now(), signal);
    if (signal.aborted) break;
    await sink.write(line + '\n');
    count++;
  }
  return count;
}

async function writeAll(lines: Iterable<{ line: string }>, stream: NodeJS.WritableStream): Promise<number> {
  let count = 0;
  let chunk = '';
  for (const { line } of lines) {
    chunk += line + '\n';
    count++;
    if (chunk.length > 64 * 1024) {
      await writeAsync(stream, chunk);
      chunk = '';
    }
  }
  if (chunk) await writeAsync(stream, chunk);
  return count;
}

export async function run(args: ParsedArgs): Promise<number> {
  if (args.positionals.length > 0)
    throw new UsageError(`unexpected argument "${args.positionals[0]}" (the plan is given with --plan FILE)`);
  const aircraft = loadAircraftFile(requireOption(args, 'aircraft'));
  const cardPath = stringOption(args, 'card');
  if (cardPath !== undefined && args.values['plan'] !== undefined)
    throw new UsageError('give --plan or --card, not both');
  const plan = cardPath !== undefined ? loadCardPlan(cardPath, aircraft) : loadPlanFile(requireOption(args, 'plan'));
  const rateHz = numberOption(args, 'rate', DEFAULT_RATE_HZ, { above: 0, max: 1000 });
  const seed = numberOption(args, 'seed', 1, { integer: true, min: 0, max: 4294967295 });
  const speed = numberOption(args, 'speed', 1, { above: 0, max: 1000 });
  const baud = numberOption(args, 'baud', DEFAULT_BAUD, { integer: true, min: 50, max: 4_000_000 });
  const out = stringOption(args, 'out');
  const serial = stringOption(args, 'serial');
  const usePty = args.values['pty'] === true;
  const wsListen = stringOption(args, 'ws-listen');
  const udp = stringOption(args, 'udp');
  const startDelayS = numberOption(args, 'start-delay', undefined, { min: 0, max: 86_400 });
  const loop = args.values['loop'] === true;
  const quiet = args.values['quiet'] === true;

  const chosen = [
    out !== undefined && '--out',
    serial !== undefined && '--serial',
    usePty && '--pty',
    wsListen !== undefined && '--ws-listen',
    udp !== undefined && '--udp',
  ].filter(Boolean);
  if (chosen.length > 1) throw new UsageError(`give one output at most (got ${chosen.join(' and ')})`);
  const live = serial !== undefined || usePty || wsListen !== undefined || udp !== undefined;
  const liveOnly = 'applies to live streaming only (--serial, --pty, --ws-listen or --udp)';
  if (loop && !live) throw new UsageError(`--loop ${liveOnly}`);
  if (args.values['speed'] !== undefined && !live) throw new UsageError(`--speed ${liveOnly}`);
  if (startDelayS !== undefined && !live) throw new UsageError(`--start-delay ${liveOnly}`);
  if (args.values['baud'] !== undefined && serial === undefined)
    throw new UsageError('--baud applies to --serial only');
  if (args.values['force'] && out === undefined) throw new UsageError('--force applies to --out only');
  if (args.values['allow-remote'] && wsListen === undefined)
    throw new UsageError('--allow-remote applies to --ws-listen only');
  if (out !== undefined)
    checkOutputPath({ option: 'out', path: out, force: args.values['force'] === true, inputs: inputFilesOf(args) });
  const udpTarget = udp !== undefined ? udpDestination(udp) : undefined;
  const wsAddress =
    wsListen !== undefined ? wsListenAddress(wsListen, args.values['allow-remote'] === true) : undefined;
  if (plan.airspeedKey === 'ias_mps') {
    try {
      createFrameWriter(aircraft, plan, { seed });
    } catch (err) {
      throw new InputError([`${plan.name}: airspeed_key "ias_mps": ${(err as Error).message}`]);
    }
  }

  // Fly the plan once without output first: a plan the model cannot fly is reported before anything is written.
  let summary: ReturnType<typeof summarize>;
  try {
    summary = summarize(simulateFlight(aircraft, plan, { rateHz }), plan, 1 / rateHz);
  } catch (err) {
    if (err instanceof SimulationError) throw new InputError([`${plan.name}: ${err.message}`]);
    throw err;
  }
  if (!quiet) process.stderr.write(formatSummary(plan, aircraft, summary.summaries, summary.frames));
  for (const s of summary.summaries) {
    if (s.liftLimitedS > 0 && !quiet) {
      process.stderr.write(
        `turnmargin: note: in "${s.label}" the wing was at CLmax for ${s.liftLimitedS.toFixed(1)} s (the commanded load factor was not available; the model does not stall)\n`,
      );
    }
  }

  if (!live) {
    if (out === undefined) {
      try {
        await writeAll(frameLines(aircraft, plan, rateHz, seed, false), process.stdout);
      } catch (err) {
        // A closed pipe (e.g. `| head`) ends the output quietly; anything else is reported.
        if (isClosedPipe(err as NodeJS.ErrnoException)) return EXIT_OK;
        throw new InputError([`standard output: cannot write (${describeOutputError(err as NodeJS.ErrnoException)})`]);
      }
      return EXIT_OK;
    }
    // Written under a temporary name and renamed at the end: an interrupted run leaves no half file named `out`.
    const file = createOutputFile(out);
    let count = 0;
    try {
      for (const { line } of frameLines(aircraft, plan, rateHz, seed, false)) {
        file.write(line + '\n');
        count++;
      }
      file.commit();
    } finally {
      file.discard();
    }
    if (!quiet) process.stderr.write(`wrote ${count} frames to ${out}\n`);
    return EXIT_OK;
  }

  const stop = new AbortController();
  const onSignal = () => stop.abort();
  process.once('SIGINT', onSignal);
  process.once('SIGTERM', onSignal);
  process.once('SIGHUP', onSignal);
  try {
    let sink: LiveSink;
    if (serial !== undefined) {
      sink = await openSerialSink(serial, baud);
    } else if (usePty) {
      const ptySink = await openPtySink();
      process.stdout.write(`pseudo-terminal ${ptySink.path}\n`);
      process.stderr.write(`turnmargin: try: turnmargin watch --serial ${ptySink.path} --aircraft FILE\n`);
      sink = ptySink;
    } else if (udp !== undefined && udpTarget !== undefined) {
      sink = await openUdpSink(udp, udpTarget);
    } else {
      sink = await openWsSink(wsListen!, wsAddress!);
    }
    let count = 0;
    try {
      await waitForReader(sink, startDelayS, stop.signal);
      count = await streamLive(frameLines(aircraft, plan, rateHz, seed, loop), sink, speed, stop.signal);
    } finally {
      await sink.close(stop.signal.aborted);
    }
    if (!quiet)
      process.stderr.write(`sent ${count} frames to ${sink.describe}${stop.signal.aborted ? ' (interrupted)' : ''}\n`);
    return EXIT_OK;
  } catch (err) {
    if (err instanceof InputError || err instanceof UsageError) throw err;
    if (err instanceof SimulationError) throw new InputError([`${plan.name}: ${err.message}`]);
    process.stderr.write(`turnmargin: simulate: ${(err as Error).message}\n`);
    return EXIT_UNUSABLE;
  } finally {
    process.off('SIGINT', onSignal);
    process.off('SIGTERM', onSignal);
    process.off('SIGHUP', onSignal);
  }
}
