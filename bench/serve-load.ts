/**
 * `serve` under load: the built CLI's `turnmargin serve --listen 127.0.0.1:0` spawned, then N websocket clients on
 * loopback each sending frames (one per message) at a steady rate for a while. Each client checks that every
 * frame is answered, once, in order (the answer's t_s is the frame's), and times each answer from send to receipt.
 */
import { spawn } from 'node:child_process';
import { once } from 'node:events';
import { createInterface } from 'node:readline';
import { WebSocket } from 'ws';
import { CLI, REPO_ROOT, nodeOptionsOf, percentile } from './measure.js';
import { syntheticFrameLine } from './synthetic-flight.js';

export interface ServeLoadOptions {
  aircraftPath: string;
  clients: number;
  rateHz: number;
  durationS: number;
}

export interface ServeLoadResult {
  clients: number;
  rateHz: number;
  durationS: number;
  framesSent: number;
  answers: number;
  /** Answers that were error objects (none expected: every frame is valid). */
  errorAnswers: number;
  /** Answers whose t_s was not the next frame's of that client. */
  outOfOrder: number;
  /** Frames still unanswered when the clients closed. */
  unanswered: number;
  /** Achieved send rate over all clients, frames/s. */
  sentPerS: number;
  latencyMs: { p50: number; p90: number; p99: number; max: number };
  serverExitCode: number | null;
  /** Socket errors seen by the clients (none expected). */
  clientErrors: string[];
  inOrder: boolean;
}

interface ClientState {
  ws: WebSocket;
  sent: number;
  answered: number;
  /** Send time (performance.now) of each frame, by index. */
  sentAtMs: number[];
  /** t_s text of each frame, by index, to match the answers. */
  tS: number[];
  outOfOrder: number;
  errors: number;
}

/** Spawn `turnmargin serve` on a free loopback port; resolves with its URL once it prints it. */
async function startServe(
  aircraftPath: string,
): Promise<{ url: string; stop(): Promise<number | null>; stderr(): string }> {
  const child = spawn(
    process.execPath,
    [...nodeOptionsOf(CLI), CLI, 'serve', '--aircraft', aircraftPath, '--listen', '127.0.0.1:0'],
    {
      cwd: REPO_ROOT,
      stdio: ['ignore', 'pipe', 'pipe'],
    },
  );
  let stderr = '';
  child.stderr.setEncoding('utf8').on('data', (d: string) => {
    stderr += d;
    if (stderr.length > 200_000) stderr = stderr.slice(-100_000);
  });
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`serve did not print its address (stderr: ${stderr})`)), 10_000);
    createInterface({ input: child.stdout }).on('line', (line) => {
      const m = /listening on (ws:\/\/\S+)/.exec(line);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]!);
      }
    });
    child.once('exit', (code) => reject(new Error(`serve exited (${code}) before listening: ${stderr}`)));
  });
  return {
    url,
    async stop() {
      if (child.exitCode !== null) return child.exitCode;
      const exited = once(child, 'exit') as Promise<[number | null]>;
      child.kill('SIGTERM');
      const [code] = await exited;
      return code;
    },
    stderr: () => stderr,
  };
}

export async function runServeLoad(options: ServeLoadOptions): Promise<ServeLoadResult> {
  const server = await startServe(options.aircraftPath);
  const latencies: number[] = [];
  const clients: ClientState[] = [];
  const clientErrors: string[] = [];
  for (let c = 0; c < options.clients; c++) {
    const ws = new WebSocket(server.url);
    const state: ClientState = { ws, sent: 0, answered: 0, sentAtMs: [], tS: [], outOfOrder: 0, errors: 0 };
    ws.on('message', (data: Buffer) => {
      const now = performance.now();
      const answer = JSON.parse(data.toString('utf8')) as { t_s?: number; error?: string };
      const k = state.answered++;
      if (answer.error !== undefined) state.errors += 1;
      if (answer.t_s !== state.tS[k]) state.outOfOrder += 1;
      const sentAt = state.sentAtMs[k];
      if (sentAt !== undefined) latencies.push(now - sentAt);
    });
    ws.on('error', (err) => clientErrors.push(`client ${c}: ${err.message}`));
    clients.push(state);
  }
  await Promise.all(clients.map((c) => once(c.ws, 'open')));

  // One timer for all clients: each sends the frames due by its schedule (rate × elapsed), one per message.
  const totalFrames = Math.round(options.rateHz * options.durationS);
  const start = performance.now();
  await new Promise<void>((resolve) => {
    const timer = setInterval(() => {
      const elapsedS = (performance.now() - start) / 1000;
      const due = Math.min(totalFrames, Math.floor(elapsedS * options.rateHz));
      for (const c of clients) {
        while (c.sent < due) {
          const i = c.sent++;
          const line = syntheticFrameLine(i, options.rateHz);
          c.tS.push((JSON.parse(line) as { t_s: number }).t_s);
          c.sentAtMs.push(performance.now());
          c.ws.send(line);
        }
      }
      if (due >= totalFrames) {
        clearInterval(timer);
        resolve();
      }
    }, 2);
  });
  const sendWallS = (performance.now() - start) / 1000;
  // Let the last answers arrive.
  const drainUntil = performance.now() + 10_000;
  while (clients.some((c) => c.answered < c.sent) && performance.now() < drainUntil)
    await new Promise((r) => setTimeout(r, 20));
  for (const c of clients) c.ws.close(1000);
  await Promise.all(
    clients.map((c) => (c.ws.readyState === WebSocket.CLOSED ? Promise.resolve() : once(c.ws, 'close'))),
  );
  const serverExitCode = await server.stop();

  const sorted = latencies.sort((a, b) => a - b);
  const framesSent = clients.reduce((s, c) => s + c.sent, 0);
  const answers = clients.reduce((s, c) => s + c.answered, 0);
  const outOfOrder = clients.reduce((s, c) => s + c.outOfOrder, 0);
  const unanswered = clients.reduce((s, c) => s + Math.max(0, c.sent - c.answered), 0);
  return {
    clients: options.clients,
    rateHz: options.rateHz,
    durationS: options.durationS,
    framesSent,
    answers,
    errorAnswers: clients.reduce((s, c) => s + c.errors, 0),
    outOfOrder,
    unanswered,
    sentPerS: framesSent / sendWallS,
    latencyMs: {
      p50: percentile(sorted, 50),
      p90: percentile(sorted, 90),
      p99: percentile(sorted, 99),
      max: sorted.at(-1) ?? NaN,
    },
    serverExitCode,
    clientErrors,
    inOrder: outOfOrder === 0 && unanswered === 0 && answers === framesSent,
  };
}
