import { describe, expect, it } from 'vitest';
import type { ReceivedLine } from '../../src/sources/source.js';
import { createServeSession, type ServeAnswer } from '../../src/serve/session.js';
import { exampleAirframe } from '../helpers/airframes.js';

const line = (tS: number, nz: number) => JSON.stringify({ t_s: tS, tas_mps: 18, alt_m: 100, nz });

describe('a serve session (one connection, no socket)', () => {
  it('answers the lines of a message in order, CRLF and a BOM included, blank lines skipped', () => {
    const session = createServeSession(exampleAirframe(), { margins: { smoothTauS: 0 } });
    const answers = session.handleMessage(`\uFEFF${line(0, 1.1)}\r\n\r\n${line(0.1, 1.2)}\r\n`);
    expect(answers.map((a) => ('error' in a ? a.error : a.n_measured))).toEqual([1.1, 1.2]);
    expect(session.stats()).toEqual({ lines: 2, answered: 2, errors: 0 });
  });

  it("answers junk with the line's words and no time, and a refused JSON object with its t_s", () => {
    const session = createServeSession(exampleAirframe(), { margins: { smoothTauS: 0 } });
    const junk = 'NOISE $GPGGA,123519,4807.038,N,01131.000,E*47';
    const outOfRange = JSON.stringify({ t_s: 4.5, tas_mps: 999, alt_m: 100, nz: 1 });
    const answers = session.handleMessage(`${junk}\n  ${outOfRange}\n{"t_s": 7, "tas`);
    expect(answers[0]).toEqual({ error: 'invalid JSON', code: 'invalid_json', line: 1 });
    expect(answers[1]).toMatchObject({ code: 'out_of_range', line: 2, t_s: 4.5 });
    // A cut object has no readable t_s.
    expect(answers[2]).toEqual({ error: 'invalid JSON (truncated line?)', code: 'invalid_json', line: 3 });
  });

  it('refuses a frame whose TAS reaches Mach 1 and goes on with the next', () => {
    // CAS 300 m/s at 20 000 m ISA is about Mach 2.3 (subsonic relations out of range).
    const session = createServeSession(exampleAirframe(), { margins: { smoothTauS: 0 } });
    const fast = JSON.stringify({ t_s: 0, cas_mps: 300, alt_m: 20000, nz: 1 });
    const answers = session.handleMessage(`${fast}\n${line(0.1, 1.2)}`);
    expect(answers[0]).toMatchObject({ code: 'out_of_range', line: 1 });
    expect('error' in answers[0]! && answers[0].error).toMatch(
      /^cas_mps above the subsonic range \(Mach 2\.3\d\) \(got 300\)$/,
    );
    expect('error' in answers[1]!).toBe(false);
  });

  it("restarts smoothing when the sender's clock restarts (5 frames behind), like the monitor", () => {
    const session = createServeSession(exampleAirframe(), { margins: { smoothTauS: 0.15 } });
    const answers: ServeAnswer[] = [];
    for (let i = 0; i < 5; i++) answers.push(...session.handleMessage(line(100 + 0.1 * i, 1.0)));
    for (let i = 0; i < 5; i++) answers.push(...session.handleMessage(line(0.1 * i, 2.5)));
    // The first four frames behind are refused; the fifth is a new segment, whose filter starts at the raw value.
    expect(answers.slice(5, 9).map((a) => ('error' in a ? a.error : 'record'))).toEqual(
      Array(4).fill('time not increasing'),
    );
    const restarted = answers[9]!;
    expect('error' in restarted).toBe(false);
    if (!('error' in restarted)) expect(restarted.n_measured).toBe(2.5);
  });

  it('hands every received line to the recorder before judging it, bad ones too', () => {
    const recorded: ReceivedLine[] = [];
    const session = createServeSession(exampleAirframe(), {
      margins: {},
      recorder: { writeLine: (l) => recorded.push(l) },
      clock: () => 1234,
    });
    session.handleMessage(Buffer.from(`${line(0, 1)}\nnot json\n`));
    expect(recorded.map((r) => [r.bytes.toString('utf8'), r.receivedAtMs, r.cut])).toEqual([
      [line(0, 1), 1234, false],
      ['not json', 1234, false],
    ]);
  });
});
