/**
 * The flight conditions one condition of the model is computed at — pressure altitude, temperature (ISA deviation
 * or OAT) and mass — as options: declared once for every command that takes them (`envelope`, `card`), with the
 * same words, units, defaults and checks.
 */
import type { Aircraft } from '../core/aircraft.js';
import { MAX_ALTITUDE_M, MIN_ALTITUDE_M, type TemperatureOptions } from '../core/atmosphere.js';
import { MASS_MAX_KG, MASS_MIN_KG } from '../core/units.js';
import { numberOption, type OptionSpec, type ParsedArgs } from './args.js';
import { UsageError } from '../errors.js';

export const ALTITUDE_RULE = { min: MIN_ALTITUDE_M, max: MAX_ALTITUDE_M };
export const MASS_RULE = { min: MASS_MIN_KG, max: MASS_MAX_KG };
const ISA_DEVIATION_RULE = { min: -100, max: 100 };
const OAT_RULE = { min: -100, max: 70 };

/** --altitude, --isa-dev, --oat, --mass, in that order. */
export const CONDITIONS_OPTIONS: readonly OptionSpec[] = [
  {
    name: 'altitude',
    type: 'string',
    valueName: 'M',
    unit: 'm, pressure altitude',
    defaultText: '0',
    description: 'pressure altitude of the condition',
  },
  {
    name: 'isa-dev',
    type: 'string',
    valueName: 'K',
    unit: 'K (= °C)',
    defaultText: '0',
    description: 'temperature deviation from ISA',
  },
  {
    name: 'oat',
    type: 'string',
    valueName: 'C',
    unit: '°C',
    description: 'outside air temperature (instead of --isa-dev)',
  },
  {
    name: 'mass',
    type: 'string',
    valueName: 'KG',
    unit: 'kg',
    defaultText: "the file's mass_kg",
    description: 'aircraft mass',
  },
];

/** --isa-dev or --oat (not both); ISA when neither. */
export function temperatureFromArgs(args: ParsedArgs): TemperatureOptions {
  const isaDev = numberOption(args, 'isa-dev', undefined, ISA_DEVIATION_RULE);
  const oat = numberOption(args, 'oat', undefined, OAT_RULE);
  if (isaDev !== undefined && oat !== undefined) throw new UsageError('give --isa-dev or --oat, not both');
  const t: TemperatureOptions = {};
  if (isaDev !== undefined) t.isaDeviationK = isaDev;
  if (oat !== undefined) t.oatC = oat;
  return t;
}

export function altitudeFromArgs(args: ParsedArgs): number {
  return numberOption(args, 'altitude', 0, ALTITUDE_RULE);
}

export function massFromArgs(args: ParsedArgs, aircraft: Aircraft): number {
  return numberOption(args, 'mass', aircraft.massKg, MASS_RULE);
}
