/**
 * The test card followed live: which point the dashboard shows, the hold timer and the n/p steps. The hold rule itself
 * is the tracker's (test/core/test-point.test.ts); these tests feed records at 20 frames/s.
 */
import { describe, expect, it } from 'vitest';
import type { CardPoint } from '../../src/core/card.js';
import type { TestPointRecord } from '../../src/core/test-point.js';
import { createLiveCard } from '../../src/dashboard/live-card.js';

// Level-turn targets: n = 1/cos(bank) (FAA-H-8083-25, load factor chart: 30° → 1.15, 45° → 1.41, 60° → 2.0).
const point = (id: string, bankDeg: number, tasMps: number): CardPoint => ({
  id,
  step: 0.5,
  tas_mps: tasMps,
  bank_deg: bankDeg,
  load_factor: 1 / Math.cos((bankDeg * Math.PI) / 180),
  hold_s: 3,
  tolerance: { bank_deg: 3, tas_mps: 1 },
  predicted: { utilization: { stall: null, thrust: null, structure: null }, sustained: true, dvdt_mps2: null },
});
const POINTS = [point('P01', 30, 20), point('P02', 45, 18), point('P03', 60, 16)];

const rec = (tS: number, bankDeg: number | null, tasMps: number): TestPointRecord => ({
  t_s: tS,
  tas_mps: tasMps,
  bank_deg: bankDeg,
  n_measured: bankDeg === null ? 1 : 1 / Math.cos((bankDeg * Math.PI) / 180),
  utilization: { stall: 0.3, thrust: 0.5, structure: 0.3, speed: 0.6 },
});

/** Frames every 0.05 s from t0 for durationS (both ends included). */
function fly(card: ReturnType<typeof createLiveCard>, t0: number, durationS: number, bankDeg: number, tasMps: number) {
  for (let i = 0; i <= Math.round(durationS / 0.05); i++) card.push(rec(t0 + i * 0.05, bankDeg, tasMps));
}

describe('a test card followed live', () => {
  it('shows the first point not yet achieved, with its hold timer while it is held', () => {
    const card = createLiveCard(POINTS, 'card.json');
    expect(card.view()).toMatchObject({ selected: 0, status: 'not_flown', holdNowS: null, deviation: null });
    fly(card, 0, 2.1, -31.5, 20.4); // a left turn counts as well as a right one
    const v = card.view();
    expect(v.point.id).toBe('P01');
    expect(v.holdNowS).toBeCloseTo(2.1, 6);
    expect(v.status).toBe('partial');
    expect(v.deviation!.bankDeg).toBeCloseTo(1.5, 9); // |−31.5| − 30
    expect(v.deviation!.tasMps).toBeCloseTo(0.4, 9);
    expect(v.deviation!.held).toBe(true);
  });

  it('marks a point achieved once held for its hold time and moves on to the next one not yet achieved', () => {
    const card = createLiveCard(POINTS, 'card.json');
    fly(card, 0, 2.95, 30, 20);
    expect(card.poll()).toEqual([]);
    card.push(rec(3.0, 30, 20)); // 3.0 s from the first held record to this one
    const fresh = card.poll();
    expect(fresh.map((r) => r.id)).toEqual(['P01']);
    expect(fresh[0]!.longest_hold_s).toBeCloseTo(3, 9);
    const v = card.view();
    expect(v.point.id).toBe('P02');
    expect(v.achievedCount).toBe(1);
    expect(v.statuses).toEqual(['achieved', 'not_flown', 'not_flown']);
    expect(card.poll()).toEqual([]); // announced once
  });

  it('skips points already achieved when moving on, wrapping to the start of the card', () => {
    const card = createLiveCard(POINTS, 'card.json');
    fly(card, 0, 3.5, 60, 16); // P03 first, while P01 is shown
    expect(card.view().point.id).toBe('P01'); // the point shown was not the one achieved
    card.step(1);
    card.step(1);
    expect(card.view().point.id).toBe('P03');
    fly(card, 10, 3.5, 30, 20); // P01 achieved while P03 is shown: P03 stays (it is already achieved)
    expect(card.view().point.id).toBe('P03');
    card.step(-1);
    fly(card, 20, 3.5, 45, 18); // P02 achieved while shown: every point done, it stays shown
    const v = card.view();
    expect(v.achievedCount).toBe(3);
    expect(v.point.id).toBe('P02');
  });

  it('steps with n/p through every point in card order, wrapping at both ends', () => {
    const card = createLiveCard(POINTS, 'card.json');
    const ids: string[] = [];
    for (let i = 0; i < 4; i++) {
      ids.push(card.view().point.id);
      card.step(1);
    }
    expect(ids).toEqual(['P01', 'P02', 'P03', 'P01']);
    card.step(-1);
    card.step(-1);
    expect(card.view().point.id).toBe('P03');
  });

  it('restarts the hold timer after a break the engine reported', () => {
    const card = createLiveCard(POINTS, 'card.json');
    fly(card, 0, 2, 30, 20);
    card.breakHere();
    expect(card.view().holdNowS).toBeNull();
    fly(card, 2.5, 2, 30, 20);
    const v = card.view();
    expect(v.holdNowS).toBeCloseTo(2, 9);
    expect(v.status).toBe('partial'); // two holds of 2 s are not one of 3 s
    expect(v.longestHoldS).toBeCloseTo(2, 9);
  });

  it('stops the timer when the bank or the speed leaves its tolerance, and keeps the best hold', () => {
    const card = createLiveCard(POINTS, 'card.json');
    fly(card, 0, 1.5, 30, 20);
    card.push(rec(1.55, 30, 21.2)); // 1.2 m/s fast: outside ±1 m/s
    const v = card.view();
    expect(v.holdNowS).toBeNull();
    expect(v.deviation).toMatchObject({ tasWithin: false, bankWithin: true, held: false });
    expect(v.longestHoldS).toBeCloseTo(1.5, 9);
    card.push(rec(1.6, null, 20)); // no bank angle: no deviation in bank, not held
    expect(card.view().deviation).toMatchObject({ bankDeg: null, held: false });
  });
});
