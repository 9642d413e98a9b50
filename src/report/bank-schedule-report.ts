/** Renderers for the bank-limit schedule (`envelope --altitudes …`). */
import type { BankScheduleRow } from '../core/bank-schedule.js';
import type { AlertThresholds } from '../core/thresholds.js';
import { alignTable, csvRow, fixed, roundOrNull, roundTo } from './numbers.js';

export const BANK_SCHEDULE_CSV_COLUMNS = [
  'altitude_m',
  'mass_kg',
  'density_kg_m3',
  'speed_mps',
  'n_stall',
  'n_thrust',
  'n_structural',
  'bank_limit_deg',
  'bank_sustained_deg',
] as const;

export function bankScheduleToCsv(rows: readonly BankScheduleRow[]): string {
  const lines = [BANK_SCHEDULE_CSV_COLUMNS.join(',')];
  for (const r of rows) {
    lines.push(
      csvRow([
        r.altitudeM,
        r.massKg,
        roundTo(r.densityKgM3, 5),
        roundTo(r.speedMps),
        roundTo(r.nStall),
        roundOrNull(r.nThrust),
        roundTo(r.nStructural),
        roundTo(r.bankLimitDeg, 3),
        roundOrNull(r.bankSustainedDeg, 3),
      ]),
    );
  }
  return lines.join('\n') + '\n';
}

export function bankScheduleToJson(
  aircraftName: string,
  thresholds: AlertThresholds,
  rows: readonly BankScheduleRow[],
) {
  const groups = new Map<string, BankScheduleRow[]>();
  for (const r of rows) {
    const key = `${r.altitudeM}|${r.massKg}`;
    const list = groups.get(key) ?? [];
    list.push(r);
    groups.set(key, list);
  }
  return {
    aircraft: aircraftName,
    thresholds: {
      stall_caution: thresholds.stallCaution,
      structure_caution: thresholds.structureCaution,
      thrust_caution: thresholds.thrustCaution,
    },
    schedules: [...groups.values()].map((list) => ({
      altitude_m: list[0]!.altitudeM,
      mass_kg: list[0]!.massKg,
      density_kg_m3: roundTo(list[0]!.densityKgM3, 5),
      points: list.map((r) => ({
        speed_mps: roundTo(r.speedMps),
        n_stall: roundTo(r.nStall),
        n_thrust: roundOrNull(r.nThrust),
        n_structural: roundTo(r.nStructural),
        bank_limit_deg: roundTo(r.bankLimitDeg, 3),
        bank_sustained_deg: roundOrNull(r.bankSustainedDeg, 3),
      })),
    })),
  };
}

export function bankScheduleToTable(aircraftName: string, rows: readonly BankScheduleRow[]): string {
  const header = [
    'alt m',
    'mass kg',
    'ρ kg/m³',
    'TAS m/s',
    'n stall',
    'n thrust',
    'n struct',
    'bank limit °',
    'sustained bank °',
  ];
  const body = rows.map((r) => [
    String(r.altitudeM),
    String(r.massKg),
    fixed(r.densityKgM3, 4),
    fixed(r.speedMps, 2),
    fixed(r.nStall, 3),
    r.nThrust === null ? 'unknown' : fixed(r.nThrust, 3),
    fixed(r.nStructural, 2),
    fixed(r.bankLimitDeg, 1),
    fixed(r.bankSustainedDeg, 1),
  ]);
  return (
    [
      `Bank-limit schedule — ${aircraftName} (caution thresholds applied; speeds are TAS)`,
      '',
      ...alignTable(
        header,
        body,
        header.map(() => true),
      ),
      '',
      "Advisory figures, not flight-critical: the aircraft's approved limits prevail.",
    ].join('\n') + '\n'
  );
}
