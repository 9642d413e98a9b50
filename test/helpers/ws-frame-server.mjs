// A telemetry relay for the websocket tests: a ws server on 127.0.0.1, driven by commands on stdin.
//   node ws-frame-server.mjs PORT     (0 = any free port) → prints "listening <port>", then "connected" per client
//   send FIRST COUNT   frames seq FIRST.. in messages of several complete lines (the last one with or without its
//                      newline), and every 50th frame alone in a message without newline; paced (~1 ms per frame);
//                      prints "sent <count>"
//   noise              three bad lines (not JSON, a wrong type, control bytes); prints "sent noise"
//   big                one 1.5 MiB message (over the client's 1 MiB cap); prints "sent big"
import { createInterface } from 'node:readline';
import { WebSocketServer } from 'ws';

const wss = new WebSocketServer({ host: '127.0.0.1', port: Number(process.argv[2] ?? 0) });
wss.on('listening', () => console.log(`listening ${wss.address().port}`));
wss.on('connection', (ws) => {
  ws.on('error', () => undefined);
  console.log('connected');
});

const frame = (seq) => JSON.stringify({ t_s: seq * 0.01, tas_mps: 20, alt_m: 100, bank_deg: 30, seq });
const broadcast = (text) => {
  for (const ws of wss.clients) ws.send(text);
};
const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

createInterface({ input: process.stdin }).on('line', async (line) => {
  const [cmd, a, b] = line.trim().split(/\s+/);
  if (cmd === 'send') {
    const first = Number(a);
    const count = Number(b);
    let group = '';
    for (let i = 0; i < count; i++) {
      const seq = first + i;
      if (seq % 50 === 0) {
        if (group) broadcast(group);
        group = '';
        broadcast(frame(seq)); // one object, no newline
        continue;
      }
      group += frame(seq) + '\n';
      if ((i + 1) % 5 === 0 || i === count - 1) {
        // A message ends its last line: the newline is optional (every other message goes without).
        broadcast(seq % 2 === 0 ? group : group.slice(0, -1));
        group = '';
        await sleep(5);
      }
    }
    if (group) broadcast(group);
    console.log(`sent ${count}`);
  } else if (cmd === 'noise') {
    broadcast('not json at all\n{"t_s":1e9,"tas_mps":"fast","alt_m":0,"nz":1}\n\u0000\u0001\n');
    console.log('sent noise');
  } else if (cmd === 'big') {
    broadcast('x'.repeat(1.5 * 1024 * 1024));
    console.log('sent big');
  }
});
