/**
 * One accepted telemetry frame, as the solver sees it (the wire format and its validation live in src/decode; the
 * keys and their bounds in the frame-key table, src/decode/frame-keys.ts).
 */
export type AirspeedKind = 'ias' | 'cas' | 'tas';

export interface Frame {
  /** Sample time, s (increasing within a stream segment). */
  tS: number;
  airspeedKind: AirspeedKind;
  /** The airspeed as given, m/s, of the kind above. */
  airspeedMps: number;
  /** Pressure altitude, m. */
  altM: number;
  bankDeg?: number;
  /** Normal load factor, g (accelerometer-derived). */
  nz?: number;
  /** Outside air temperature, °C. */
  oatC?: number;
  /** Overrides the airframe's mass, kg. */
  massKg?: number;
  /** Throttle, fraction of full throttle (0 idle … 1 full). */
  throttle?: number;
  /** The frame comes from a simulator (`simulate` says so). */
  simulated?: boolean;
}
