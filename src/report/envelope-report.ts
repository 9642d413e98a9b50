/** Renderers for `turnmargin envelope`: JSON (the contract's exact keys), CSV and an aligned text table. */
import type { BankTurn, Envelope, EnvelopePoint, EnvelopeTurn } from '../core/envelope.js';
import { alignTable, csvRow, fixed, roundOrNull, roundTo } from './numbers.js';

function turnJson(turn: EnvelopeTurn) {
  return {
    n: roundOrNull(turn.n),
    limited_by: turn.limitedBy,
    bank_deg: roundOrNull(turn.bankDeg),
    turn_rate_dps: roundOrNull(turn.turnRateDps),
    radius_m: roundOrNull(turn.radiusM),
  };
}

function pointJson(p: EnvelopePoint) {
  return {
    speed_mps: roundTo(p.speedMps),
    n_stall: roundTo(p.nStall),
    n_thrust: roundOrNull(p.nThrust),
    n_structural: roundTo(p.nStructural),
    sustained: turnJson(p.sustained),
    instantaneous: turnJson(p.instantaneous),
  };
}

function bankTurnJson(t: BankTurn) {
  return {
    bank_deg: t.bankDeg,
    load_factor: roundTo(t.loadFactor),
    stall_speed_mps: roundTo(t.stallSpeedMps),
    sustained: t.sustained && {
      min_speed_mps: roundTo(t.sustained.minSpeedMps, 3),
      max_speed_mps: roundTo(t.sustained.maxSpeedMps, 3),
      turn_rate_dps: roundTo(t.sustained.turnRateDps),
      radius_m: roundOrNull(t.sustained.radiusM),
    },
  };
}

export interface EnvelopeNotes {
  /** Lines about defaults in use (e.g. the 14 CFR 23.337 default limit). */
  notes: string[];
  /** `--banks` was given: the outputs carry the turn table. */
  banks?: boolean;
}

export function envelopeToJson(env: Envelope, extra: EnvelopeNotes) {
  return {
    aircraft: env.aircraftName,
    conditions: {
      altitude_m: env.altitudeM,
      temperature_k: roundTo(env.temperatureK, 3),
      pressure_pa: roundTo(env.pressurePa, 1),
      density_kg_m3: roundTo(env.densityKgM3, 5),
      mass_kg: env.massKg,
      weight_n: roundTo(env.weightN, 4),
    },
    stall_speed_mps: roundTo(env.stallSpeedMps),
    corner_speed_mps: roundTo(env.cornerSpeedMps),
    vne_cas_mps: env.vneCasMps,
    vne_tas_mps: roundOrNull(env.vneTasMps),
    max_sustained: env.maxSustainedLoadFactor && {
      load_factor: roundTo(env.maxSustainedLoadFactor.value),
      speed_mps: roundTo(env.maxSustainedLoadFactor.speedMps, 3),
    },
    max_sustained_turn_rate: env.maxSustainedTurnRateDps && {
      turn_rate_dps: roundTo(env.maxSustainedTurnRateDps.value),
      speed_mps: roundTo(env.maxSustainedTurnRateDps.speedMps, 3),
    },
    min_sustained_radius: env.minSustainedRadiusM && {
      radius_m: roundTo(env.minSustainedRadiusM.value),
      speed_mps: roundTo(env.minSustainedRadiusM.speedMps, 3),
    },
    search_range_mps: [roundTo(env.searchFromMps, 3), roundTo(env.searchToMps, 3)],
    notes: extra.notes,
    ...(extra.banks ? { turns: env.turns.map(bankTurnJson) } : {}),
    points: env.points.map(pointJson),
  };
}

export const ENVELOPE_CSV_COLUMNS = [
  'speed_mps',
  'n_stall',
  'n_thrust',
  'n_structural',
  'sustained_n',
  'sustained_limited_by',
  'sustained_bank_deg',
  'sustained_turn_rate_dps',
  'sustained_radius_m',
  'instantaneous_n',
  'instantaneous_limited_by',
  'instantaneous_bank_deg',
  'instantaneous_turn_rate_dps',
  'instantaneous_radius_m',
  'vne_tas_mps',
] as const;

/** The turn table's CSV (`envelope --banks … --format csv`): one row per bank. */
export const TURNS_CSV_COLUMNS = [
  'bank_deg',
  'load_factor',
  'stall_speed_mps',
  'sustained_min_speed_mps',
  'sustained_max_speed_mps',
  'sustained_turn_rate_dps',
  'sustained_radius_m',
  'vne_tas_mps',
] as const;

export function turnsToCsv(env: Envelope): string {
  const lines = [TURNS_CSV_COLUMNS.join(',')];
  for (const t of env.turns) {
    const j = bankTurnJson(t);
    lines.push(
      csvRow([
        j.bank_deg,
        j.load_factor,
        j.stall_speed_mps,
        j.sustained?.min_speed_mps,
        j.sustained?.max_speed_mps,
        j.sustained?.turn_rate_dps,
        j.sustained?.radius_m,
        roundOrNull(env.vneTasMps),
      ]),
    );
  }
  return lines.join('\n') + '\n';
}

export function envelopeToCsv(env: Envelope): string {
  const lines = [ENVELOPE_CSV_COLUMNS.join(',')];
  for (const p of env.points) {
    const s = p.sustained;
    const i = p.instantaneous;
    lines.push(
      csvRow([
        roundTo(p.speedMps),
        roundTo(p.nStall),
        roundOrNull(p.nThrust),
        roundTo(p.nStructural),
        roundOrNull(s.n),
        s.limitedBy,
        roundOrNull(s.bankDeg),
        roundOrNull(s.turnRateDps),
        roundOrNull(s.radiusM),
        roundOrNull(i.n),
        i.limitedBy,
        roundOrNull(i.bankDeg),
        roundOrNull(i.turnRateDps),
        roundOrNull(i.radiusM),
        roundOrNull(env.vneTasMps),
      ]),
    );
  }
  return lines.join('\n') + '\n';
}

export function envelopeToTable(env: Envelope, extra: EnvelopeNotes): string {
  const out: string[] = [];
  out.push(`Turn envelope — ${env.aircraftName}`);
  out.push(
    `Conditions: pressure altitude ${env.altitudeM} m, ${fixed(env.temperatureK, 2)} K, ${fixed(env.pressurePa, 0)} Pa, ` +
      `density ${fixed(env.densityKgM3, 4)} kg/m³, mass ${env.massKg} kg (weight ${fixed(env.weightN, 2)} N). Speeds are TAS.`,
  );
  out.push(
    `Stall speed Vs1 ${fixed(env.stallSpeedMps, 2)} m/s   corner speed ${fixed(env.cornerSpeedMps, 2)} m/s` +
      (env.vneTasMps === null || env.vneCasMps === null
        ? '   no vne_mps in the file'
        : `   vne ${fixed(env.vneCasMps, 1)} m/s CAS = ${fixed(env.vneTasMps, 2)} m/s TAS here`),
  );
  const opt = (label: string, o: { value: number; speedMps: number } | null, unit: string, d: number) =>
    o ? `${label} ${fixed(o.value, d)} ${unit} at ${fixed(o.speedMps, 2)} m/s` : `${label} — (no sustained turn)`;
  out.push(
    `Sustained turn optima (Vs1 to ${fixed(env.searchToMps, 1)} m/s): ` +
      [
        opt('max n', env.maxSustainedLoadFactor, 'g', 3),
        opt('max rate', env.maxSustainedTurnRateDps, '°/s', 1),
        opt('min radius', env.minSustainedRadiusM, 'm', 1),
      ].join('; '),
  );
  for (const note of extra.notes) out.push(`Note: ${note}`);
  out.push('');
  const header = [
    'TAS m/s',
    'n stall',
    'n thrust',
    'n struct',
    'sust n',
    'sust limit',
    'sust bank°',
    'sust °/s',
    'sust R m',
    'inst n',
    'inst limit',
    'inst bank°',
    'inst °/s',
    'inst R m',
  ];
  const rows = env.points.map((p) => [
    fixed(p.speedMps, 2),
    fixed(p.nStall, 3),
    p.nThrust === null ? 'unknown' : fixed(p.nThrust, 3),
    fixed(p.nStructural, 2),
    fixed(p.sustained.n, 3),
    p.sustained.limitedBy ?? 'thrust unknown',
    fixed(p.sustained.bankDeg, 1),
    fixed(p.sustained.turnRateDps, 1),
    fixed(p.sustained.radiusM, 1),
    fixed(p.instantaneous.n, 3),
    p.instantaneous.limitedBy ?? '—',
    fixed(p.instantaneous.bankDeg, 1),
    fixed(p.instantaneous.turnRateDps, 1),
    fixed(p.instantaneous.radiusM, 1),
  ]);
  out.push('sust = sustained turn (thrust = drag); inst = instantaneous (stall or structure only).');
  out.push(
    ...alignTable(
      header,
      rows,
      header.map((_, i) => i !== 5 && i !== 10),
    ),
  );
  if (extra.banks) out.push('', ...turnsTable(env));
  out.push('');
  out.push("Advisory figures for test planning, not flight-critical: the aircraft's approved limits, the operator's");
  out.push('procedures and local aviation rules take precedence.');
  return out.join('\n') + '\n';
}

function turnsTable(env: Envelope): string[] {
  const header = ['bank°', 'n', 'Vs m/s', 'min V m/s', 'max V m/s', '°/s at min V', 'R m at min V'];
  const rows = env.turns.map((t) => [
    fixed(t.bankDeg, 1),
    fixed(t.loadFactor, 3),
    fixed(t.stallSpeedMps, 2),
    t.sustained ? fixed(t.sustained.minSpeedMps, 2) : 'none',
    fixed(t.sustained?.maxSpeedMps, 2),
    fixed(t.sustained?.turnRateDps, 1),
    fixed(t.sustained?.radiusM, 1),
  ]);
  return [
    'Level turns by bank: Vs = stall speed at the bank; min V to max V = speeds (TAS) where the turn can be held',
    '(thrust, stall and structure all allow n), "none" when no speed can; rate and radius at min V.',
    ...alignTable(
      header,
      rows,
      header.map(() => true),
    ),
  ];
}
