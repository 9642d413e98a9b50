/** Airframes for tests: the worked example and small variants built from it. */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { parseAircraft, type Aircraft, type AircraftJson } from '../../src/core/aircraft.js';

export const EXAMPLE_AIRFRAME_PATH = fileURLToPath(new URL('../fixtures/example-airframe.json', import.meta.url));
export const DEMO_AIRFRAME_PATH = fileURLToPath(new URL('../../replays/demo-airframe.json', import.meta.url));

export function exampleAirframeJson(): AircraftJson {
  return JSON.parse(readFileSync(EXAMPLE_AIRFRAME_PATH, 'utf8')) as AircraftJson;
}

/** Parse an airframe object, failing the test with the problems if it is invalid. */
export function airframe(json: unknown): Aircraft {
  const result = parseAircraft(json, 'test.json');
  if (!result.ok) throw new Error(result.problems.join('\n'));
  return result.value;
}

export function exampleAirframe(overrides: Record<string, unknown> = {}): Aircraft {
  return airframe({ ...exampleAirframeJson(), ...overrides });
}
