/**
 * One `fit` over one or more flights: what is gathered from the frame engine's margin records and breaks while the
 * files are read (usable samples, counts, the demonstrated CL, the flights' conditions, the Ps residual for the
 * plot), and the analysis that follows (the fit, the fitted airframe, the envelope with each model, the warnings,
 * or why nothing can be estimated and what to fly). Pure: the shell reads the files and feeds the records; every
 * rate, smoothing and break comes from the engine.
 */
import type { Aircraft } from './aircraft.js';
import { isaTemperatureK } from './atmosphere.js';
import { createDecimator, median } from './decimate.js';
import { modelSpecificExcessPowerMps } from './energy.js';
import { computeEnvelope, type Envelope } from './envelope.js';
import {
  CL_HOLD_S,
  computeFit,
  createFitCollector,
  FULL_THROTTLE,
  fitFrameOf,
  fittedAircraft,
  IDLE_THROTTLE,
  isPhysicalPolar,
  MAX_BANK_RATE_DPS,
  POLAR_ADVICE,
  THRUST_ADVICE,
  type FitFrameCounts,
  type FitResult,
  type FitSample,
} from './fit.js';
import type { MarginRecord } from './margin-record.js';

/** Points of the Ps residual kept per file for the plot, and frames kept for the median conditions. */
export const RESIDUAL_POINTS_PER_FILE = 2000;
export const FIT_CONDITION_SAMPLES = 2048;

export interface FitData {
  counts: FitFrameCounts;
  samples: FitSample[];
  clDemonstrated: number | null;
  /** Flying frames (evenly spread) for the median conditions. */
  conditions: ReadonlyArray<{ altM: number; isaDeviationK: number; massKg: number }>;
  /** Ps measured − modelled with the file's model (the record's ps_residual_mps) against t_s, per file, decimated. */
  residuals: Array<Array<[number, number]>>;
}

export interface FitAccumulator {
  /** Before the records of each file (the first included). */
  startFile(): void;
  /** One margin record of the engine, in file order. */
  record(rec: MarginRecord): void;
  /** The engine's dataBreak (a gap, a reconnect, a clock restart, the end of a file). */
  breakData(): void;
  data(): FitData;
}

/** `smoothTauS`: the engine's smoothing time constant (the collector allows for its delay). */
export function createFitAccumulator(rateWindowS: number, smoothTauS: number): FitAccumulator {
  const collector = createFitCollector(rateWindowS, smoothTauS);
  const conditions = createDecimator<{ altM: number; isaDeviationK: number; massKg: number }>(FIT_CONDITION_SAMPLES);
  const residuals: Array<ReturnType<typeof createDecimator<[number, number]>>> = [];
  let files = 0;
  const startFile = (): void => {
    if (files > 0) collector.nextFlight();
    files += 1;
    residuals.push(createDecimator<[number, number]>(RESIDUAL_POINTS_PER_FILE));
  };
  return {
    startFile,
    record(rec) {
      if (files === 0) startFile();
      collector.push(fitFrameOf(rec));
      if (rec.flying) {
        if (conditions.keepsNext())
          conditions.push({
            altM: rec.alt_m,
            isaDeviationK: rec.temperature_k - isaTemperatureK(rec.alt_m),
            massKg: rec.mass_kg,
          });
        else conditions.skip();
      }
      const r = rec.ps_residual_mps;
      if (r !== null && Number.isFinite(r)) {
        const series = residuals[residuals.length - 1]!;
        if (series.keepsNext()) series.push([rec.t_s, r]);
        else series.skip();
      }
    },
    breakData: () => collector.breakData(),
    data: () => ({
      counts: collector.counts(),
      samples: collector.samples(),
      clDemonstrated: collector.clDemonstrated(),
      conditions: conditions.items(),
      residuals: residuals.map((d) => [...d.items()]),
    }),
  };
}

/** Significant digits of the fitted values written to an airframe file. */
export const WRITTEN_DIGITS = 6;
const written = (x: number): number => Number(x.toPrecision(WRITTEN_DIGITS));

/**
 * The fitted numbers as `--write-airframe` writes them (6 significant digits), so that the envelope of the written
 * file is exactly the fitted envelope of the report. What was not fitted stays the file's, unrounded.
 */
function writtenPrecision(fitted: Aircraft, file: Aircraft): Aircraft {
  const out: Aircraft = { ...fitted };
  if (fitted.cd0 !== file.cd0 || fitted.k !== file.k) {
    out.cd0 = written(fitted.cd0);
    out.k = written(fitted.k);
  }
  if (fitted.thrust !== file.thrust) {
    const t = fitted.thrust;
    out.thrust =
      t.model === 'constant'
        ? { ...t, thrustN: written(t.thrustN) }
        : t.model === 'power'
          ? { ...t, powerW: written(t.powerW), staticThrustN: written(t.staticThrustN) }
          : { ...t, points: t.points.map(([v, n]) => [v, written(n)] as const) };
  }
  return out;
}

/** What the `fitted` record of a written airframe file tells about where the fit came from. */
export interface FitProvenance {
  /** Date of the data (YYYY-MM-DD), or null when unknown. */
  dataDate: string | null;
  /** Where the date comes from: a recording's start, or the file's modification time. */
  dataDateFrom: 'recording' | 'file modified' | null;
  files: string[];
  rateWindowS: number;
}

/**
 * The airframe file's JSON with the fitted polar ({cd0, k}) and the thrust scaled (power: power_w and
 * static_thrust_n × s; constant: thrust_n × s; table: every thrust × s), plus a `fitted` object (the date of the
 * data, the files, the samples and the intervals) that the airframe loader accepts and ignores. Everything else
 * in the file is kept as it was.
 */
export function fittedAirframeJson(
  original: Record<string, unknown>,
  outcome: FitOutcome,
  about: FitProvenance,
): Record<string, unknown> {
  const out: Record<string, unknown> = { ...original };
  const { fit, fitted } = outcome;
  const polarApplied = outcome.applied.polar;
  if (polarApplied) out['polar'] = { cd0: fitted.cd0, k: fitted.k };
  const scaleApplied = outcome.applied.thrustScale && typeof original['thrust'] === 'object';
  if (scaleApplied) {
    const thrust: Record<string, unknown> = { ...(original['thrust'] as Record<string, unknown>) };
    const t = fitted.thrust;
    if (t.model === 'constant') thrust['thrust_n'] = t.thrustN;
    else if (t.model === 'power') {
      thrust['power_w'] = t.powerW;
      thrust['static_thrust_n'] = t.staticThrustN;
    } else thrust['points'] = t.points.map(([v, n]) => [v, n]);
    out['thrust'] = thrust;
  }
  const est = (e: { value: number; ci95: [number, number] }) => ({
    value: written(e.value),
    ci95: [written(e.ci95[0]), written(e.ci95[1])],
  });
  out['fitted'] = {
    note: 'written by turnmargin fit; the airframe loader ignores this object',
    data_date: about.dataDate,
    data_date_from: about.dataDateFrom,
    files: about.files,
    rate_window_s: about.rateWindowS,
    samples: { idle: fit.independent.idle, full: fit.independent.full },
    polar: polarApplied
      ? {
          cd0: est(fit.polar!.cd0),
          k: est(fit.polar!.k),
          r2: written(fit.polar!.r2),
          cl2_range: [written(fit.polar!.cl2Range[0]), written(fit.polar!.cl2Range[1])],
          samples: fit.polar!.samples,
        }
      : null,
    thrust_scale: scaleApplied ? { ...est(fit.thrustScale!.scale), samples: fit.thrustScale!.samples } : null,
    cl_demonstrated: outcome.clDemonstrated === null ? null : written(outcome.clDemonstrated),
  };
  return out;
}

/** The conditions of the envelope comparison, rounded as they are printed (so `envelope` gives the same). */
export interface FitConditions {
  altitudeM: number;
  isaDeviationK: number;
  massKg: number;
}

export interface FitOutcome {
  fit: FitResult;
  /** Which fitted parts the fitted airframe uses (a polar or scale that is not positive is reported, not used). */
  applied: { polar: boolean; thrustScale: boolean };
  /** The airframe with what was fitted (and physical) applied; the rest is the file's. */
  fitted: Aircraft;
  clDemonstrated: number | null;
  conditions: FitConditions;
  envelopeFile: Envelope;
  envelopeFitted: Envelope;
  warnings: string[];
  /** Ps measured − modelled with the fitted model at the independent samples, per file: [t_s, residual]. */
  fittedResiduals: Array<Array<[number, number]>>;
}

export type FitAnalysis = { ok: true; value: FitOutcome } | { ok: false; problems: string[] };

/** Usable samples whose speeds all lie within this fraction of their median count as a single speed. */
export const SINGLE_SPEED_SPREAD = 0.1;

const WHAT_TO_FLY = `record "throttle" (0…1) in every frame, and in calm air ${POLAR_ADVICE}, and ${THRUST_ADVICE}`;

const plural = (n: number, word: string): string => `${n} ${word}${n === 1 ? '' : 's'}`;

/**
 * The fit of the gathered data, or why it cannot be made (no usable frame, no throttle, a single speed, nothing
 * estimable): each problem says what is missing and what to fly. Never a NaN.
 */
export function analyseFit(aircraft: Aircraft, data: FitData, rateWindowS: number): FitAnalysis {
  const { counts } = data;
  if (counts.total === 0) return { ok: false, problems: [`no accepted frame to fit; ${WHAT_TO_FLY}`] };
  if (counts.withoutThrottle === counts.total)
    return {
      ok: false,
      problems: [
        `no frame carries "throttle" (${plural(counts.total, 'accepted frame')}): fit needs it to tell power-off glides from full-throttle flight; ${WHAT_TO_FLY}`,
      ],
    };
  if (counts.usable === 0)
    return {
      ok: false,
      problems: [
        `no usable frame among ${plural(counts.total, 'accepted frame')} (${counts.withoutThrottle} without throttle): ` +
          `none was flying at full throttle (≥ ${FULL_THROTTLE}) or idle (≤ ${IDLE_THROTTLE}) with the bank changing by less than ${MAX_BANK_RATE_DPS} °/s ` +
          `for a whole rate window of ${rateWindowS} s after a break; ${WHAT_TO_FLY}`,
      ],
    };
  const speeds = data.samples.map((s) => s.tasMps);
  const vMid = median(speeds)!;
  const vLo = Math.min(...speeds);
  const vHi = Math.max(...speeds);
  if (vHi - vLo < SINGLE_SPEED_SPREAD * vMid)
    return {
      ok: false,
      problems: [
        `every usable frame was flown at one speed (${vLo.toFixed(1)}–${vHi.toFixed(1)} m/s TAS): one speed cannot separate CD0 from k nor the drag from the thrust; ${WHAT_TO_FLY}`,
      ],
    };

  const fit = computeFit(aircraft, data.samples, rateWindowS);
  if (fit.polar === null && fit.thrustScale === null)
    return {
      ok: false,
      problems: [
        `nothing could be estimated from ${plural(counts.usable, 'usable frame')} (${counts.idle} idle, ${counts.full} full throttle):`,
        `polar: ${fit.polarReason}`,
        `thrust: ${fit.thrustReason}`,
      ],
    };

  const warnings: string[] = [];
  // A polar or scale that is not positive cannot describe an airframe (the file's model would refuse it): reported,
  // never applied.
  let applied: FitResult = fit;
  if (fit.polar !== null && !isPhysicalPolar(fit.polar)) {
    warnings.push(
      `the fitted polar (CD0 ${fit.polar.cd0.value.toPrecision(3)}, k ${fit.polar.k.value.toPrecision(3)}) is not physical (both must be positive): the idle data are not steady glides or the throttle is wrong; the file's polar is kept`,
    );
    applied = { ...applied, polar: null };
  }
  if (fit.thrustScale !== null && !(fit.thrustScale.scale.value > 0)) {
    warnings.push(
      `the fitted thrust scale ${fit.thrustScale.scale.value.toPrecision(3)} is not positive: the full-throttle data are not what they claim; the file's thrust is kept`,
    );
    applied = { ...applied, thrustScale: null };
  }
  const fitted = writtenPrecision(fittedAircraft(aircraft, applied), aircraft);

  const clDemonstrated = data.clDemonstrated;
  if (clDemonstrated !== null && clDemonstrated > aircraft.clMax)
    warnings.push(
      `the wing held CL ${clDemonstrated.toFixed(3)} for ${CL_HOLD_S} s, above the file's cl_max ${aircraft.clMax}: the file is conservative, or the data are wrong (airspeed, mass or nz); fit never raises cl_max`,
    );
  if (fit.polarReason !== null) warnings.push(`polar not estimated: ${fit.polarReason}`);
  if (fit.thrustReason !== null) warnings.push(`thrust scale not estimated: ${fit.thrustReason}`);
  if (counts.withoutThrottle > 0)
    warnings.push(`${plural(counts.withoutThrottle, 'frame')} without "throttle" were not used`);

  const altM = median(data.conditions.map((c) => c.altM));
  const conditions: FitConditions = {
    altitudeM: Math.round(altM ?? 0),
    isaDeviationK: Math.round((median(data.conditions.map((c) => c.isaDeviationK)) ?? 0) * 10) / 10 || 0,
    massKg: Math.round((median(data.conditions.map((c) => c.massKg)) ?? aircraft.massKg) * 1000) / 1000,
  };
  const envelopeConditions = {
    altitudeM: conditions.altitudeM,
    temperature: { isaDeviationK: conditions.isaDeviationK },
    massKg: conditions.massKg,
  };

  // The fitted model's residual at each independent sample: what the plot shows against the file's.
  const fittedResiduals: Array<Array<[number, number]>> = data.residuals.map(() => []);
  for (const s of data.samples) {
    const modelled = modelSpecificExcessPowerMps(fitted, {
      tasMps: s.tasMps,
      densityKgM3: s.densityKgM3,
      massKg: s.massKg,
      loadFactor: s.loadFactor,
      throttle: s.regime === 'full' ? 1 : 0,
    });
    if (modelled !== null && fittedResiduals[s.flight]) fittedResiduals[s.flight]!.push([s.tS, s.psMps - modelled]);
  }

  return {
    ok: true,
    value: {
      fit,
      applied: { polar: applied.polar !== null, thrustScale: applied.thrustScale !== null },
      fitted,
      clDemonstrated,
      conditions,
      envelopeFile: computeEnvelope(aircraft, envelopeConditions),
      envelopeFitted: computeEnvelope(fitted, envelopeConditions),
      warnings,
      fittedResiduals,
    },
  };
}
