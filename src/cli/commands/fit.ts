/**
 * `turnmargin fit FILE... --aircraft F`: estimate the drag polar, the thrust scale and the demonstrated CL from
 * recorded flights, through the same frame engine as review (records, breaks and rates are the engine's), and
 * show what the fitted model changes in the envelope. Optionally writes the fitted airframe file.
 */
import { existsSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import type { Aircraft } from '../../core/aircraft.js';
import { computeAirState } from '../../core/atmosphere.js';
import { createDecimator, median } from '../../core/decimate.js';
import { computeEnvelope } from '../../core/envelope.js';
import { computeFit, createFitCollector, fittedAircraft, type FitFrame, type FitResult } from '../../core/fit.js';
import { createFrameEngine } from '../../core/frame-engine.js';
import type { MarginRecord } from '../../core/margin-record.js';
import { DEFAULT_SMOOTH_TAU_S } from '../../core/margins.js';
import { createRateEstimator, DEFAULT_RATE_WINDOW_S } from '../../core/rate-estimator.js';
import { KELVIN_OFFSET } from '../../core/units.js';
import { readFrameBatches, type ReadFrameOptions } from '../../decode/read-frames.js';
import { fitToJson, fitToMarkdown, renderFitPlotSvg, type FitReportInput } from '../../report/fit-report.js';
import { EXIT_OK, InputError, UsageError } from '../../errors.js';
import { choiceOption, numberOption, requireOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { loadAircraftFile, readJson } from '../load.js';

export const spec: CommandSpec = {
  name: 'fit',
  summary: 'estimate the drag polar, the thrust and the demonstrated CL from recorded flights',
  usage:
    'turnmargin fit FILE... --aircraft FILE [--mapping FILE] [--rate-window S] [--format md|json] [--plot OUT.svg] [--write-airframe OUT.json] [--force]',
  options: [
    { name: 'aircraft', type: 'string', valueName: 'FILE', description: 'airframe model file (JSON); required' },
    {
      name: 'mapping',
      type: 'string',
      valueName: 'FILE',
      description: 'column mapping file (JSON) for CSV logs with other column names or units',
    },
    {
      name: 'rate-window',
      type: 'string',
      valueName: 'S',
      unit: 's',
      defaultText: String(DEFAULT_RATE_WINDOW_S),
      description: 'window of the dV/dt and dh/dt estimates; also the spacing of independent samples',
    },
    {
      name: 'format',
      type: 'string',
      valueName: 'FORMAT',
      defaultText: 'md',
      description: 'report format: md or json',
    },
    {
      name: 'plot',
      type: 'string',
      valueName: 'OUT.svg',
      description: 'also draw CD against CL² (fit, band, file) and the Ps residual against time to this SVG file',
    },
    {
      name: 'write-airframe',
      type: 'string',
      valueName: 'OUT.json',
      description: 'write the airframe file with the fitted polar and scaled thrust (and a "fitted" record)',
    },
    { name: 'force', type: 'boolean', description: 'replace existing output files' },
  ],
  notes: [
    'Usable frames: flying, throttle ≥ 0.98 (full) or ≤ 0.02 (idle), rates defined, bank changing by less than ' +
      '10 °/s over the rate window, and no break inside the window. Frames without "throttle" are not used. ' +
      'Idle frames give the polar CD = CD0 + k·CL² (drag D = −W·Ps/V); full-throttle frames give the thrust scale ' +
      's in T_measured ≈ s·T_model. Intervals are 95 %, from one sample per rate window. fit never raises cl_max.',
    'What to fly: power-off glides at three or more speeds between 1.3 and 2 Vs1, and full-throttle level ' +
      'accelerations or turns at several speeds, each steady for 10 s or more, in calm air.',
    'Exit 0 with a report; 2 when nothing can be estimated (no usable frame, no throttle, a single speed) or for bad input.',
    "Advisory only: a fitted model is only as good as its data; the aircraft's approved limits prevail.",
  ],
};

/** Records carry these once the engine computes the energy state (issue: energy and predictions). */
type EnergyRecord = MarginRecord & { ps_mps?: number | null; ps_residual_mps?: number | null };

const RESIDUAL_POINTS_PER_FILE = 2000;
const CONDITION_SAMPLES = 2048;

function refuseOutput(path: string | undefined, option: string, inputs: string[], force: boolean): void {
  if (path === undefined) return;
  if (path === '') throw new UsageError(`--${option} needs a file name`, 'fit');
  for (const input of inputs) {
    try {
      const a = statSync(path);
      const b = statSync(input);
      if (a.dev === b.dev && a.ino === b.ino)
        throw new UsageError(`--${option} ${path} is an input file (${input})`, 'fit');
    } catch (err) {
      if (err instanceof UsageError) throw err;
    }
  }
  if (existsSync(path)) {
    if (statSync(path).isDirectory()) throw new UsageError(`--${option} ${path} is a directory`, 'fit');
    if (!force) throw new UsageError(`--${option} ${path} exists (give --force to replace it)`, 'fit');
  }
}

/** Write a whole file under a temporary name and rename it: an interrupted run leaves no half file. */
function writeWhole(path: string, text: string): void {
  const tmp = join(dirname(path), `.${basename(path)}.${process.pid}.tmp`);
  try {
    writeFileSync(tmp, text);
    renameSync(tmp, path);
  } catch (err) {
    throw new InputError([`${path}: cannot write (${(err as Error).message})`]);
  }
}

interface FlightData {
  collector: ReturnType<typeof createFitCollector>;
  residuals: Array<Array<[number, number]>>;
  conditions: { altM: number; temperatureK: number; massKg: number }[];
  files: string[];
}

async function readFlights(
  files: string[],
  aircraft: Aircraft,
  rateWindowS: number,
  mappingPath: string | undefined,
): Promise<FlightData> {
  const collector = createFitCollector(rateWindowS, createRateEstimator(rateWindowS));
  const residuals: Array<Array<[number, number]>> = [];
  const conditionSamples = createDecimator<{ altM: number; temperatureK: number; massKg: number }>(CONDITION_SAMPLES);
  for (const file of files) {
    const readOptions: ReadFrameOptions = mappingPath !== undefined ? { mappingPath } : {};
    const engine = createFrameEngine(
      aircraft,
      { smoothTauS: DEFAULT_SMOOTH_TAU_S },
      { dataBreak: () => collector.breakData() },
    );
    const residual = createDecimator<[number, number]>(RESIDUAL_POINTS_PER_FILE);
    for await (const batch of readFrameBatches(file, { ...readOptions, raw: false })) {
      for (const line of batch) {
        if (!line.verdict.ok) {
          if (line.afterReconnect === true) engine.breakData('link_lost');
          continue;
        }
        const frame = line.verdict.frame;
        const rec = engine.push(frame, line) as EnergyRecord | null;
        if (rec === null) continue;
        const input: FitFrame = {
          tS: rec.t_s,
          flying: rec.flying,
          throttle: (frame as { throttle?: number }).throttle ?? null,
          bankDeg: rec.bank_deg,
          tasMps: rec.tas_mps,
          loadFactor: rec.n_measured,
          densityKgM3: rec.density_kg_m3,
          massKg: rec.mass_kg,
          cl: rec.cl,
          psMps: rec.ps_mps ?? null,
        };
        collector.push(input);
        if (rec.flying) {
          if (conditionSamples.keepsNext())
            conditionSamples.push({ altM: rec.alt_m, temperatureK: rec.temperature_k, massKg: rec.mass_kg });
          else conditionSamples.skip();
        }
        const r = rec.ps_residual_mps;
        if (r !== undefined && r !== null) {
          if (residual.keepsNext()) residual.push([rec.t_s, r]);
          else residual.skip();
        }
      }
    }
    engine.finish();
    collector.nextFlight();
    residuals.push([...residual.items()]);
  }
  return { collector, residuals, conditions: [...conditionSamples.items()], files };
}

/** The airframe file's JSON with the fitted polar and the thrust scaled, plus a "fitted" record of where from. */
export function fittedAirframeJson(
  original: Record<string, unknown>,
  fit: FitResult,
  about: { files: string[]; dataDate: string | null; rateWindowS: number },
): Record<string, unknown> {
  const out: Record<string, unknown> = { ...original };
  if (fit.polar)
    out['polar'] = { cd0: Number(fit.polar.cd0.value.toPrecision(6)), k: Number(fit.polar.k.value.toPrecision(6)) };
  if (fit.thrustScale) {
    const s = fit.thrustScale.scale.value;
    const thrust = { ...(original['thrust'] as Record<string, unknown>) };
    const scaled = (x: unknown) => Number(((x as number) * s).toPrecision(6));
    switch (thrust['model']) {
      case 'power':
        thrust['power_w'] = scaled(thrust['power_w']);
        thrust['static_thrust_n'] = scaled(thrust['static_thrust_n']);
        break;
      case 'constant':
        thrust['thrust_n'] = scaled(thrust['thrust_n']);
        break;
      case 'table':
        thrust['points'] = (thrust['points'] as Array<[number, number]>).map(([v, t]) => [v, scaled(t)]);
        break;
    }
    out['thrust'] = thrust;
  }
  out['fitted'] = {
    data_date: about.dataDate,
    files: about.files,
    rate_window_s: about.rateWindowS,
    polar: fit.polar
      ? {
          cd0_ci95: fit.polar.cd0.ci95,
          k_ci95: fit.polar.k.ci95,
          r2: fit.polar.r2,
          samples: fit.polar.samples,
        }
      : null,
    thrust_scale: fit.thrustScale
      ? { value: fit.thrustScale.scale.value, ci95: fit.thrustScale.scale.ci95, samples: fit.thrustScale.samples }
      : null,
  };
  return out;
}

/** The date of the data: the first receive time of a recording, else the file's modification date. */
function dataDate(file: string): string | null {
  try {
    const head = readFileSync(file, { encoding: 'utf8', flag: 'r' }).slice(0, 4096);
    const m = /^#turnmargin-recording[^\n]*\n(\d+)\t/m.exec(head);
    if (m) return new Date(Number(m[1])).toISOString().slice(0, 10);
    return statSync(file).mtime.toISOString().slice(0, 10);
  } catch {
    return null;
  }
}

export async function run(args: ParsedArgs): Promise<number> {
  const files = args.positionals;
  if (files.length === 0) throw new UsageError('the flight FILE(s) to fit are missing', 'fit');
  const aircraftFile = requireOption(args, 'aircraft');
  const format = choiceOption(args, 'format', ['md', 'json'] as const, 'md');
  const rateWindowS = numberOption(args, 'rate-window', DEFAULT_RATE_WINDOW_S, { above: 0, max: 30 });
  const mappingPath = stringOption(args, 'mapping');
  const plotPath = stringOption(args, 'plot');
  const airframeOut = stringOption(args, 'write-airframe');
  const force = args.values['force'] === true;
  if (plotPath !== undefined && !plotPath.toLowerCase().endsWith('.svg'))
    throw new UsageError(`--plot ${plotPath}: the plot is an SVG file; give a name ending in .svg`, 'fit');
  const inputs = [...files, aircraftFile, ...(mappingPath !== undefined ? [mappingPath] : [])];
  refuseOutput(plotPath, 'plot', inputs, force);
  refuseOutput(airframeOut, 'write-airframe', inputs, force);
  if (plotPath !== undefined && plotPath === airframeOut)
    throw new UsageError('--plot and --write-airframe name the same file', 'fit');

  const aircraft = loadAircraftFile(aircraftFile);
  const data = await readFlights(files, aircraft, rateWindowS, mappingPath);
  const counts = data.collector.counts();
  const what =
    'fly power-off glides at three or more speeds between 1.3 and 2 Vs1 and full-throttle level accelerations or turns, with "throttle" (0…1) in every frame';
  if (counts.total === 0) throw new InputError([`${files.join(', ')}: no accepted frame to fit`]);
  if (counts.withoutThrottle === counts.total)
    throw new InputError([
      `no frame carries "throttle" (${counts.total} frames read): fit needs it to tell idle glides from full-throttle flight; ${what}`,
    ]);
  if (counts.usable === 0)
    throw new InputError([
      `no usable frame among ${counts.total} (${counts.withoutThrottle} without throttle): none was flying steadily at full throttle or idle for a whole rate window of ${rateWindowS} s; ${what}`,
    ]);
  const fit = computeFit(aircraft, data.collector.samples(), rateWindowS);
  if (fit.polar === null && fit.thrustScale === null)
    throw new InputError([
      `nothing could be estimated from ${counts.usable} usable frames:`,
      `polar: ${fit.polarReason}`,
      `thrust: ${fit.thrustReason}`,
    ]);

  const altM = median(data.conditions.map((c) => c.altM)) ?? 0;
  const temperatureK = median(data.conditions.map((c) => c.temperatureK)) ?? computeAirState(altM).temperatureK;
  const massKg = median(data.conditions.map((c) => c.massKg)) ?? aircraft.massKg;
  const conditions = { altitudeM: altM, temperature: { oatC: temperatureK - KELVIN_OFFSET }, massKg };
  const fitted = fittedAircraft(aircraft, fit);
  const warnings: string[] = [];
  const clDemonstrated = data.collector.clDemonstrated();
  if (clDemonstrated !== null && clDemonstrated > aircraft.clMax)
    warnings.push(
      `the wing held CL ${clDemonstrated.toFixed(3)} for 0.5 s, above the file's cl_max ${aircraft.clMax}: the file is conservative, or the data are wrong (airspeed, mass or nz); fit does not raise cl_max`,
    );
  if (fit.polarReason) warnings.push(`polar not estimated: ${fit.polarReason}`);
  if (fit.thrustReason) warnings.push(`thrust scale not estimated: ${fit.thrustReason}`);
  if (counts.withoutThrottle > 0) warnings.push(`${counts.withoutThrottle} frames without "throttle" were not used`);

  const report: FitReportInput = {
    files,
    aircraftFile,
    aircraft,
    rateWindowS,
    counts,
    fit,
    clDemonstrated,
    conditions: { altitudeM: altM, temperatureC: temperatureK - KELVIN_OFFSET, massKg },
    envelopeFile: computeEnvelope(aircraft, conditions),
    envelopeFitted: computeEnvelope(fitted, conditions),
    warnings,
    residuals: data.residuals,
  };
  if (plotPath !== undefined) writeWhole(plotPath, renderFitPlotSvg(report));
  if (airframeOut !== undefined) {
    const original = readJson(aircraftFile, 'airframe') as Record<string, unknown>;
    const json = fittedAirframeJson(original, fit, { files, dataDate: dataDate(files[0]!), rateWindowS });
    writeWhole(airframeOut, JSON.stringify(json, null, 2) + '\n');
  }
  process.stdout.write(format === 'json' ? JSON.stringify(fitToJson(report), null, 2) + '\n' : fitToMarkdown(report));
  return EXIT_OK;
}
