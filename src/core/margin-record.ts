/**
 * The margin record: one per accepted frame. The single type behind `--no-ui` output, review `--per-frame`,
 * `serve` answers and the dashboard. Keys are the wire keys (snake_case, unit in the name).
 */
import type { LimitName } from './performance.js';

export type AlertLevel = 'caution' | 'warning';
export type Level = 'normal' | AlertLevel;

export interface ActiveAlert {
  limit: LimitName;
  level: AlertLevel;
  /**
   * Present only while the alert is on but its utilization has been below threshold − hysteresis since this frame
   * time (t_s of the first frame of the running clear stretch); it goes off once the stretch lasts clear_s. An event
   * ends at this time.
   */
  clear_since_s?: number;
}

/** An input taken from a default rather than from the frame or the airframe file. */
export type Assumption = 'n_from_bank' | 'temperature_isa' | 'n_limit_default';

export interface Utilization {
  stall: number | null;
  thrust: number | null;
  structure: number | null;
  /** CAS ÷ vne_mps, null without vne_mps. */
  speed: number | null;
}

export interface MarginRecord {
  t_s: number;
  /** TAS used for every limit and utilization: the frame's TAS low-passed like n (same τ, same restarts). */
  tas_mps: number;
  eas_mps: number;
  density_kg_m3: number;
  /** Smoothed measured load factor n_f. */
  n_measured: number;
  n_stall: number;
  n_thrust: number | null;
  n_structural: number;
  utilization: Utilization;
  bank_limit_deg: number;
  /** bank_limit_deg with thrust caution × n_thrust also in the min when n_thrust is known. */
  bank_sustained_deg: number;
  level: Level;
  alerts: ActiveAlert[];
  // --- more keys (the contract allows them) ---
  alt_m: number;
  mass_kg: number;
  temperature_k: number;
  bank_deg: number | null;
  nz: number | null;
  /** 1/cos(bank), or null without bank. */
  n_from_bank: number | null;
  /** Stall speed at the present n (TAS), and the margin of TAS above it in %. */
  stall_speed_mps: number | null;
  stall_speed_margin_pct: number | null;
  /** Lift coefficient in use, n·W/(q·S). */
  cl: number | null;
  turn_rate_dps: number | null;
  radius_m: number | null;
  /** true when n_measured and 1/cos(bank) differ by more than 0.15 for over 1 s. */
  uncoordinated: boolean;
  /** false below 0.5·Vs1: utilizations are null and no alert is raised. */
  flying: boolean;
  /** The unsmoothed load factor of this frame (nz, else 1/cos(bank)). */
  n_raw: number;
  /** Negative-g stall limit q·S·CLmin/W, or null without cl_min. */
  n_stall_neg: number | null;
  /** Negative structural limit n_limit_neg. */
  n_structural_neg: number;
  /** The frame's TAS before smoothing. */
  tas_raw_mps: number;
  /** CAS from tas_mps at the frame's pressure and temperature (compressible relation); compared with vne_mps. */
  cas_mps: number;
  /** Inputs assumed for this frame (see Assumption), in a fixed order; empty when none. */
  assumed: Assumption[];
  // --- energy state and predictions (the frame engine's energy tracker fills them; see core/energy-tracker.ts) ---
  /** The frame's throttle, fraction of full (0 idle … 1 full), or null when the frame has none. */
  throttle: number | null;
  /** dV/dt: least-squares slope of tas_raw_mps over the rate window [t − W, t], m/s²; null while the window is short. */
  dvdt_mps2: number | null;
  /** dh/dt: the same slope of alt_m, m/s. */
  dhdt_mps: number | null;
  /** The same slope of bank_deg, °/s (null without bank). */
  bank_rate_dps: number | null;
  /** Measured specific excess power dh/dt + (tas_mps/g0)·dV/dt, m/s. */
  ps_mps: number | null;
  /** Modelled specific excess power V·(T − D)/W at full throttle or idle, m/s; null at part throttle or unknown. */
  ps_model_mps: number | null;
  /** ps_mps − ps_model_mps, m/s. */
  ps_residual_mps: number | null;
  /**
   * Mean of ps_residual_mps over the last 3 s of frames that have one, m/s: restarted at breaks and when the
   * throttle setting (full, idle, other) changes, and taking a residual only once the whole rate window lies in one
   * setting (the rates lag a step by up to the window). The dashboard's model advisory reads it.
   */
  ps_residual_mean_3s_mps: number | null;
  /** Time until the stall utilization reaches the stall caution at the present deceleration, s (≤ 60). */
  time_to_stall_caution_s: number | null;
  /** The same for the stall warning, s. */
  time_to_stall_warning_s: number | null;
  /** [lo, hi] TAS in [Vs1, vne as TAS] where a level turn at max(1, n_measured) can be held, m/s; null if none. */
  sustained_band_mps: [number, number] | null;
  /** Present (true) only when the frame says it comes from a simulator: the dashboard marks the screen. */
  simulated?: true;
}
