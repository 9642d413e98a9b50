/**
 * `serve` under a flood (part of `npm run soak`): the built `turnmargin serve` on loopback, one good client sending
 * 200 frames/s (one per message) while 8 clients each send 4 × 1 MiB of junk lines (and read their answers). The
 * good client times each answer from send to receipt; the server's RSS is sampled from /proc every 100 ms: the peak
 * during the flood and the level a few seconds after the junk clients have left.
 * Targets: good client's answer p99 ≤ 100 ms, server RSS ≤ 300 MB at peak and < 150 MB after they leave.
 */
import { spawn } from 'node:child_process';
import { once } from 'node:events';
import { readFileSync } from 'node:fs';
import { createInterface } from 'node:readline';
import { WebSocket } from 'ws';
import { CLI, REPO_ROOT, nodeOptionsOf, percentile } from './measure.js';
import { syntheticFrameLine } from './synthetic-flight.js';

export interface ServeFloodOptions {
  aircraftPath: string;
  junkClients: number;
  /** 1 MiB messages per junk client. */
  junkMessages: number;
  goodRateHz: number;
}

export interface ServeFloodResult {
  junkClients: number;
  junkMessages: number;
  junkLinesPerMessage: number;
  junkAnswers: number;
  junkWallS: number;
  goodFrames: number;
  goodAnswered: number;
  goodOutOfOrder: number;
  latencyMs: { p50: number; p99: number; max: number };
  rssStartMb: number;
  rssPeakMb: number;
  rssAfterMb: number;
  serverExitCode: number | null;
}

/** Junk as a misconfigured sender would produce it: text lines that are not frames (about 40 bytes each). */
const JUNK_LINE = 'NOISE $GPGGA,123519,4807.038,N,01131.000,E*47';
const MIB = 1024 * 1024;

function rssMb(pid: number): number {
  try {
    const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) / 1024 : NaN;
  } catch {
    return NaN;
  }
}

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

export async function runServeFlood(options: ServeFloodOptions): Promise<ServeFloodResult> {
  const child = spawn(
    process.execPath,
    [...nodeOptionsOf(CLI), CLI, 'serve', '--aircraft', options.aircraftPath, '--listen', '127.0.0.1:0'],
    {
      cwd: REPO_ROOT,
      stdio: ['ignore', 'pipe', 'ignore'],
    },
  );
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error('serve did not print its address')), 10_000);
    createInterface({ input: child.stdout }).on('line', (line) => {
      const m = /listening on (ws:\/\/\S+)/.exec(line);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]!);
      }
    });
  });
  const pid = child.pid!;
  await sleep(500);
  const rssStartMb = rssMb(pid);
  let rssPeakMb = rssStartMb;
  const sampler = setInterval(() => (rssPeakMb = Math.max(rssPeakMb, rssMb(pid) || 0)), 100);

  // The good client: one frame per message at a steady rate, each answer timed.
  const good = new WebSocket(url);
  await once(good, 'open');
  const sentAt: number[] = [];
  const latencies: number[] = [];
  let goodAnswered = 0;
  let goodOutOfOrder = 0;
  good.on('message', (data: Buffer) => {
    const k = goodAnswered++;
    const answer = JSON.parse(data.toString('utf8')) as { t_s?: number };
    const expectedT = (JSON.parse(syntheticFrameLine(k, options.goodRateHz)) as { t_s: number }).t_s;
    if (answer.t_s !== expectedT) goodOutOfOrder += 1;
    latencies.push(performance.now() - sentAt[k]!);
  });
  let goodSent = 0;
  const startMs = performance.now();
  const goodTimer = setInterval(() => {
    const due = Math.floor(((performance.now() - startMs) / 1000) * options.goodRateHz);
    while (goodSent < due) {
      sentAt.push(performance.now());
      good.send(syntheticFrameLine(goodSent++, options.goodRateHz));
    }
  }, 2);

  await sleep(1000);
  // The junk clients: all their messages at once (ws and TCP hold back what the server does not take yet).
  const linesPerMessage = Math.floor(MIB / (JUNK_LINE.length + 1));
  const junkStart = performance.now();
  // In a process of their own, so that reading 700 k junk answers never delays the good client's clock.
  const junkScript = `
    import { WebSocket } from 'ws';
    import { once } from 'node:events';
    const [url, clients, messages, lines, line] = process.argv.slice(1);
    const message = (line + '\\n').repeat(Number(lines));
    let total = 0;
    await Promise.all(Array.from({ length: Number(clients) }, async () => {
      const ws = new WebSocket(url);
      await once(ws, 'open');
      let answers = 0;
      const all = Number(lines) * Number(messages);
      const finished = new Promise((resolve) => {
        ws.on('message', () => { answers += 1; total += 1; if (answers === all) resolve(); });
        ws.on('close', resolve);
      });
      for (let i = 0; i < Number(messages); i++) ws.send(message);
      await finished;
      ws.close(1000);
    }));
    process.stdout.write(String(total));
  `;
  const junk = spawn(
    process.execPath,
    [
      '--input-type=module',
      '-e',
      junkScript,
      url,
      String(options.junkClients),
      String(options.junkMessages),
      String(linesPerMessage),
      JUNK_LINE,
    ],
    { cwd: REPO_ROOT, stdio: ['ignore', 'pipe', 'inherit'] },
  );
  let junkOut = '';
  junk.stdout.setEncoding('utf8').on('data', (d: string) => (junkOut += d));
  await once(junk, 'exit');
  const junkAnswers = Number(junkOut);
  const junkWallS = (performance.now() - junkStart) / 1000;
  // The flood is over: the good client goes on, and the server's memory is read once the junk clients have left.
  const rssAfter: number[] = [];
  for (let i = 0; i < 10; i++) {
    await sleep(1000);
    rssAfter.push(rssMb(pid));
  }
  clearInterval(goodTimer);
  clearInterval(sampler);
  const rssAfterMb = rssAfter.at(-1)!;
  process.stdout.write(
    `serve flood: RSS each second after the junk clients left: ${rssAfter.map((x) => x.toFixed(0)).join(' ')} MB\n`,
  );
  good.close(1000);
  await once(good, 'close');
  child.kill('SIGTERM');
  const [serverExitCode] = (await once(child, 'exit')) as [number | null];

  const sorted = latencies.sort((a, b) => a - b);
  return {
    junkClients: options.junkClients,
    junkMessages: options.junkMessages,
    junkLinesPerMessage: linesPerMessage,
    junkAnswers,
    junkWallS,
    goodFrames: goodSent,
    goodAnswered,
    goodOutOfOrder,
    latencyMs: { p50: percentile(sorted, 50), p99: percentile(sorted, 99), max: sorted.at(-1) ?? NaN },
    rssStartMb,
    rssPeakMb,
    rssAfterMb,
    serverExitCode,
  };
}

const verdict = (ok: boolean): string => (ok ? 'met' : 'MISSED');

/** Run the flood bench for `npm run soak`: prints progress, stores the result, returns the report's rows. */
export async function runServeFloodRows(
  aircraftPath: string,
  results: Record<string, unknown>,
): Promise<Array<[string, string, string, string]>> {
  const options = { aircraftPath, junkClients: 8, junkMessages: 4, goodRateHz: 200 };
  process.stdout.write(
    `\nserve under a flood: ${options.junkClients} clients × ${options.junkMessages} × 1 MiB of junk lines while one client sends ${options.goodRateHz} frames/s…\n`,
  );
  const r = await runServeFlood(options);
  results['serveFlood'] = r;
  return [
    [
      `serve flood: ${r.junkClients} × ${r.junkMessages} × 1 MiB junk (${r.junkLinesPerMessage} lines each)`,
      `${r.junkAnswers} junk lines answered in ${r.junkWallS.toFixed(1)} s`,
      'every junk line answered',
      verdict(r.junkAnswers === r.junkClients * r.junkMessages * r.junkLinesPerMessage),
    ],
    [
      `serve flood: good client ${r.goodFrames} frames, answers in order`,
      `${r.goodAnswered} answered, ${r.goodOutOfOrder} out of order`,
      'all, in order',
      verdict(r.goodAnswered === r.goodFrames && r.goodOutOfOrder === 0),
    ],
    [
      'serve flood: good client latency p50 / p99 / max',
      `${r.latencyMs.p50.toFixed(1)} / ${r.latencyMs.p99.toFixed(1)} / ${r.latencyMs.max.toFixed(1)} ms`,
      'p99 ≤ 100 ms',
      verdict(r.latencyMs.p99 <= 100),
    ],
    [
      'serve flood: server RSS start → peak',
      `${r.rssStartMb.toFixed(0)} → ${r.rssPeakMb.toFixed(0)} MB`,
      '≤ 300 MB',
      verdict(r.rssPeakMb <= 300),
    ],
    [
      'serve flood: server RSS after the junk clients left',
      `${r.rssAfterMb.toFixed(0)} MB`,
      '< 150 MB',
      verdict(r.rssAfterMb < 150),
    ],
    ['serve flood: exit on SIGTERM', `code ${r.serverExitCode}`, '0', verdict(r.serverExitCode === 0)],
  ];
}
