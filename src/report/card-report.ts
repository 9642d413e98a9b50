/** Renderers for `turnmargin card`: JSON (the card file `simulate --card` and review read), CSV and printable Markdown. */
import type { CardPoint, TestCard } from '../core/card.js';
import type { TestPointResult } from '../core/test-point.js';
import { csvRow, fixed, roundOrNull, roundTo } from './numbers.js';

function pointJson(p: CardPoint): CardPoint {
  const u = p.predicted.utilization;
  return {
    id: p.id,
    step: p.step,
    tas_mps: roundTo(p.tas_mps),
    bank_deg: roundTo(p.bank_deg),
    load_factor: roundTo(p.load_factor),
    hold_s: p.hold_s,
    tolerance: { bank_deg: p.tolerance.bank_deg, tas_mps: p.tolerance.tas_mps },
    predicted: {
      utilization: { stall: roundOrNull(u.stall), thrust: roundOrNull(u.thrust), structure: roundOrNull(u.structure) },
      sustained: p.predicted.sustained,
      dvdt_mps2: roundOrNull(p.predicted.dvdt_mps2),
    },
  };
}

/** The card file: `{conditions, points, excluded}` (numbers rounded to 6 decimals). */
export function cardToJson(card: TestCard): TestCard {
  const c = card.conditions;
  return {
    conditions: {
      ...c,
      isa_deviation_k: roundTo(c.isa_deviation_k),
      temperature_k: roundTo(c.temperature_k),
      pressure_pa: roundTo(c.pressure_pa, 3),
      density_kg_m3: roundTo(c.density_kg_m3),
      vs1_mps: roundTo(c.vs1_mps),
      vne_tas_mps: roundOrNull(c.vne_tas_mps),
      n_structural: roundTo(c.n_structural),
    },
    points: card.points.map(pointJson),
    excluded: card.excluded.map((e) => ({ ...e, load_factor: roundTo(e.load_factor) })),
  };
}

export const CARD_CSV_HEADER = [
  'id',
  'step',
  'tas_mps',
  'bank_deg',
  'load_factor',
  'hold_s',
  'tolerance_bank_deg',
  'tolerance_tas_mps',
  'utilization_stall',
  'utilization_thrust',
  'utilization_structure',
  'sustained',
  'dvdt_mps2',
];

/** One row per point, in build-up order. */
export function cardToCsv(card: TestCard): string {
  const rows = card.points.map((q) => {
    const p = pointJson(q);
    const u = p.predicted.utilization;
    return csvRow([
      p.id,
      p.step,
      p.tas_mps,
      p.bank_deg,
      p.load_factor,
      p.hold_s,
      p.tolerance.bank_deg,
      p.tolerance.tas_mps,
      u.stall,
      u.thrust,
      u.structure,
      p.predicted.sustained,
      p.predicted.dvdt_mps2,
    ]);
  });
  return [csvRow(CARD_CSV_HEADER), ...rows].join('\n') + '\n';
}

const pct = (x: number | null) => (x === null ? '—' : `${Math.round(x * 100)} %`);

/** A printable card: conditions, cautions, one row per point with a blank "done" column, and the exclusions. */
export function cardToMarkdown(card: TestCard): string {
  const c = card.conditions;
  const temperature =
    c.oat_c !== null
      ? `OAT ${fixed(c.oat_c, 1)} °C`
      : `ISA ${c.isa_deviation_k >= 0 ? '+' : '−'} ${fixed(Math.abs(c.isa_deviation_k), 1)} K`;
  const lines = [
    `# Turn test card — ${c.aircraft}`,
    '',
    '> **Cautions**',
    '>',
    ...c.notes.map((n) => `> - ${n}`),
    '',
    '## Conditions',
    '',
    `- Pressure altitude ${fixed(c.altitude_m, 0)} m, ${temperature} (${fixed(c.temperature_k, 2)} K), density ${fixed(c.density_kg_m3, 4)} kg/m³`,
    `- Mass ${c.mass_kg} kg; Vs1 ${fixed(c.vs1_mps, 2)} m/s TAS; vne ${c.vne_tas_mps === null ? '— (not in the airframe file)' : `${fixed(c.vne_tas_mps, 2)} m/s TAS`}; n_structural ${fixed(c.n_structural, 2)}`,
    `- Targets: n = step × min(n_stall, n_structural), bank = acos(1/n), level coordinated turn; warning thresholds kept below: stall ${c.stall_warning}, structure ${c.structure_warning}`,
    `- Build-up order: by step ascending, within a step by speed descending. Speeds are TAS.`,
    '',
    '## Points',
    '',
    '| done | id | step | TAS m/s | bank ° | n | hold s | tol bank ° | tol TAS m/s | stall | thrust | structure | sustained | dV/dt m/s² |',
    '|---|---|---|---|---|---|---|---|---|---|---|---|---|---|',
    ...card.points.map((p) => {
      const u = p.predicted.utilization;
      return `| ☐ | ${p.id} | ${p.step} | ${fixed(p.tas_mps, 1)} | ${fixed(p.bank_deg, 1)} | ${fixed(p.load_factor, 2)} | ${p.hold_s} | ±${p.tolerance.bank_deg} | ±${p.tolerance.tas_mps} | ${pct(u.stall)} | ${pct(u.thrust)} | ${pct(u.structure)} | ${p.predicted.sustained ? 'yes' : 'no (speed bleeds)'} | ${fixed(p.predicted.dvdt_mps2, 2)} |`;
    }),
    '',
    'stall, thrust, structure: predicted utilization (load factor ÷ limit) at the target; dV/dt: full-throttle',
    'acceleration (T − D)/m in the level turn (negative: the speed bleeds). A thrust of — : full thrust cannot',
    'hold even level flight at that speed (no turn is sustainable there), or the thrust is unknown there.',
  ];
  if (card.excluded.length > 0) {
    lines.push('', '## Excluded targets', '', '| step | TAS m/s | n | reason |', '|---|---|---|---|');
    for (const e of card.excluded)
      lines.push(`| ${e.step} | ${fixed(e.tas_mps, 1)} | ${fixed(e.load_factor, 3)} | ${e.reason} |`);
  }
  lines.push('');
  return lines.join('\n');
}

const STATUS_WORDS = { achieved: 'achieved', partial: 'partial', not_flown: 'not flown' } as const;

/** The test points of a review: one row per card point, measured next to predicted. */
export function testPointsToMarkdown(points: readonly TestPointResult[], cardName: string): string {
  const achieved = points.filter((p) => p.status === 'achieved').length;
  const lines = [
    `## Test points (${cardName})`,
    '',
    `${achieved} of ${points.length} achieved. A point is held while |bank| and TAS stay within its tolerances; a`,
    'break in the data ends a hold. Measured over the longest hold; predicted by the card at its conditions.',
    '',
    '| id | target TAS m/s | target bank ° | status | longest hold s | file | start t_s | n measured / target | TAS mean | bank mean | dV/dt measured / predicted m/s² |',
    '|---|---|---|---|---|---|---|---|---|---|---|',
  ];
  for (const p of points) {
    const m = p.measured;
    lines.push(
      `| ${p.id} | ${fixed(p.tas_mps, 1)} | ${fixed(p.bank_deg, 1)} | ${STATUS_WORDS[p.status]} | ${fixed(p.longest_hold_s, 1)} of ${p.hold_s} | ` +
        `${p.file ?? '—'} | ${fixed(p.start_t_s, 1)} | ${fixed(m?.load_factor_mean, 2)} / ${fixed(p.load_factor, 2)} | ` +
        `${fixed(m?.tas_mps_mean, 1)} | ${fixed(m?.bank_deg_mean, 1)} | ${fixed(m?.dvdt_mps2, 2)} / ${fixed(p.predicted.dvdt_mps2, 2)} |`,
    );
  }
  lines.push('');
  return lines.join('\n');
}

export const TEST_POINT_CSV_HEADER = [
  'id',
  'tas_mps',
  'bank_deg',
  'load_factor',
  'hold_s',
  'status',
  'longest_hold_s',
  'file',
  'start_t_s',
  'load_factor_mean',
  'tas_mps_mean',
  'bank_deg_mean',
  'dvdt_mps2',
  'utilization_peak_stall',
  'utilization_peak_thrust',
  'utilization_peak_structure',
  'predicted_dvdt_mps2',
  'predicted_sustained',
];

export function testPointsToCsv(points: readonly TestPointResult[]): string {
  const rows = points.map((p) => {
    const m = p.measured;
    return csvRow([
      p.id,
      roundTo(p.tas_mps),
      roundTo(p.bank_deg),
      roundTo(p.load_factor),
      p.hold_s,
      p.status,
      roundTo(p.longest_hold_s),
      p.file,
      roundOrNull(p.start_t_s),
      roundOrNull(m?.load_factor_mean),
      roundOrNull(m?.tas_mps_mean),
      roundOrNull(m?.bank_deg_mean),
      roundOrNull(m?.dvdt_mps2),
      roundOrNull(m?.utilization_peak.stall),
      roundOrNull(m?.utilization_peak.thrust),
      roundOrNull(m?.utilization_peak.structure),
      roundOrNull(p.predicted.dvdt_mps2),
      p.predicted.sustained,
    ]);
  });
  return [csvRow(TEST_POINT_CSV_HEADER), ...rows].join('\n') + '\n';
}

/** check's lines for a card: how many points were achieved, and each one that was not. */
export function testPointSummary(points: readonly TestPointResult[]): string {
  const achieved = points.filter((p) => p.status === 'achieved').length;
  const lines = [`test points: ${achieved} of ${points.length} achieved`];
  for (const p of points.filter((q) => q.status !== 'achieved')) {
    lines.push(
      `  ${p.id} (${fixed(p.bank_deg, 1)}° at ${fixed(p.tas_mps, 1)} m/s): ${STATUS_WORDS[p.status]}` +
        (p.status === 'partial' ? `, longest hold ${fixed(p.longest_hold_s, 1)} of ${p.hold_s} s` : ''),
    );
  }
  return lines.join('\n') + '\n';
}
