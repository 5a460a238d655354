/**
 * The air of the demo line, minute by minute, and what its counters report.
 *
 * Truth per location and minute (cumulative concentration ≥ d, particles/m³):
 *
 *   C(≥ d, t) = a(t) · (0.1 µm / d)^α  +  b(t) · (0.1 µm / d)^1.6  +  e(t) · (0.5 µm / d)^α_e
 *
 *   a(t) = c₀.₁ · (1 − k + k·A(t)) · exp(σ z(t) − σ²/2)     the room's own particles
 *   b(t)  bursts of people passing (open rooms), flatter spectrum, decaying with a 3 min time constant
 *   e(t)  the excursion's excess particles (only BOR-B2 and its echo in BOR-B1)
 *
 * A(t) is the activity of people on local site time: day shift 06–14 h (1.0), late shift 14–22 h
 * (0.85), night 22–06 h (0.5), weekends × 0.6, and a gowning/hand-over bump around each shift change.
 * z(t) is a unit-variance AR(1) process with a 20 min correlation time; exp(σz − σ²/2) has mean 1.
 * k (activityCoupling) is how much of a location's air follows people (open rooms much more than
 * mini-environments, which see the room through their isolation).
 *
 * Counts: per channel the expected differential count is V·[C(≥ d_i) − C(≥ d_{i+1})] for the sampled
 * volume V; each is an exact Poisson draw (src/model/rng.ts) and the file reports the cumulative
 * sums, so a row is monotone in size by construction (ISO 21501-4 counters report either form).
 */
import {
  CHANNELS_M,
  type CounterSpec,
  DUPLICATE_BURST,
  EXCURSION,
  type LineLocation,
  SAMPLE_S,
  SITE_UTC_OFFSET_H,
  WINDOW_DAYS,
  WINDOW_START_MS,
  ZERO_RUN,
} from './line.ts';
import { lognormal, type Rng, stream } from './random.ts';

export const MINUTES = WINDOW_DAYS * 1440;
const BURST_SLOPE = 1.6;
const BURST_DECAY_PER_MIN = Math.exp(-1 / 3);
const AR_RHO = Math.exp(-1 / 20);

/** People's activity on local time: shift levels, weekend factor, shift-change bumps. */
export function activity(utcMs: number): number {
  const local = new Date(utcMs + SITE_UTC_OFFSET_H * 3_600_000);
  const hour = local.getUTCHours() + local.getUTCMinutes() / 60;
  const weekday = local.getUTCDay(); // 0 Sunday … 6 Saturday
  let a = hour >= 6 && hour < 14 ? 1 : hour >= 14 && hour < 22 ? 0.85 : 0.5;
  if (weekday === 0 || weekday === 6) a *= 0.6;
  // Hand-over: a triangular bump of +0.9 peaking at the shift change, 25 min either side.
  for (const change of [6, 14, 22]) {
    let dh = Math.abs(hour - change);
    dh = Math.min(dh, 24 - dh);
    if (dh < 25 / 60) a += 0.9 * (1 - dh / (25 / 60)) * (weekday === 0 || weekday === 6 ? 0.6 : 1);
  }
  return a;
}

/** The realised truth of one location: per minute, the three components at their reference sizes. */
export interface AirPath {
  locationId: string;
  slope: number;
  slopeLarge: number;
  /** Room component ≥ 0.1 µm, particles/m³, per minute. */
  room: Float64Array;
  /** Burst component ≥ 0.1 µm, per minute. */
  burst: Float64Array;
  /** Excursion excess ≥ 0.5 µm, per minute. */
  excess: Float64Array;
  excessSlope: number;
}

const cache = new Map<string, AirPath>();

/** Excursion envelope 0…1 at minute start t (rise, plateau, exponential-like decay). */
function excursionEnvelope(tMs: number): number {
  const { startMs, endMs, riseMin, decayMin } = EXCURSION;
  if (tMs < startMs) return 0;
  const sinceStartMin = (tMs - startMs) / 60_000;
  if (tMs < endMs) return Math.min(1, sinceStartMin / riseMin);
  const sinceEndMin = (tMs - endMs) / 60_000;
  const v = Math.exp(-sinceEndMin / (decayMin / 3));
  return v < 1e-3 ? 0 : v;
}

export function airPath(loc: LineLocation): AirPath {
  const hit = cache.get(loc.id);
  if (hit) return hit;
  const spec = loc.counter;
  if (!spec) throw new Error(`location ${loc.id} has no counter`);
  const air = spec.air;
  const rng = stream(`air:${loc.id}`);
  const room = new Float64Array(MINUTES);
  const burst = new Float64Array(MINUTES);
  const excess = new Float64Array(MINUTES);
  let z = rng.normal();
  let b = 0;
  const k = air.activityCoupling;
  const sig = air.sigmaLn;
  const base05 = air.c01PerM3 * (0.1 / 0.5) ** air.slope;
  for (let m = 0; m < MINUTES; m++) {
    const t = WINDOW_START_MS + m * SAMPLE_S * 1000;
    const act = activity(t);
    z = AR_RHO * z + Math.sqrt(1 - AR_RHO * AR_RHO) * rng.normal();
    room[m] = air.c01PerM3 * (1 - k + k * act) * Math.exp(sig * z - (sig * sig) / 2);
    b *= BURST_DECAY_PER_MIN;
    if (air.burstsPerHour > 0 && rng.uniform() < (air.burstsPerHour * act) / 60)
      b += air.c01PerM3 * 0.6 * lognormal(rng, 0.5);
    burst[m] = b;
    if (loc.id === EXCURSION.locationId) excess[m] = EXCURSION.factor * base05 * excursionEnvelope(t);
    else if (loc.id === EXCURSION.echo.locationId)
      excess[m] = (EXCURSION.echo.factor - 1) * base05 * excursionEnvelope(t);
  }
  const path: AirPath = {
    locationId: loc.id,
    slope: air.slope,
    slopeLarge: air.slopeLarge,
    room,
    burst,
    excess,
    excessSlope: EXCURSION.slope,
  };
  cache.set(loc.id, path);
  return path;
}

/** Largest airborne particle of the truth, m (counters' top channel is ≥ 5 µm). */
export const AIR_CEILING_M = 20e-6;
const KNEE_M = 0.5e-6;

function above(p: AirPath, m: number, dM: number): number {
  const room =
    dM <= KNEE_M ? (0.1e-6 / dM) ** p.slope : (0.1e-6 / KNEE_M) ** p.slope * (KNEE_M / dM) ** p.slopeLarge;
  return (
    p.room[m]! * room +
    p.burst[m]! * (0.1e-6 / dM) ** BURST_SLOPE +
    p.excess[m]! * (0.5e-6 / dM) ** p.excessSlope
  );
}

/** Truth: concentration ≥ d (m) at minute index m, particles/m³ (none above AIR_CEILING_M). */
export function concentrationAbove(p: AirPath, m: number, dM: number): number {
  if (dM >= AIR_CEILING_M) return 0;
  return above(p, m, dM) - above(p, m, AIR_CEILING_M);
}

/** Minute index of an instant (floor), clamped into the window. */
export function minuteIndex(tMs: number): number {
  return Math.min(MINUTES - 1, Math.max(0, Math.floor((tMs - WINDOW_START_MS) / 60_000)));
}

// ───────────────────────────── counter rows ─────────────────────────────

export interface CounterRow {
  counterId: string;
  locationId: string;
  startMs: number;
  durationS: number;
  volumeM3: number;
  /** Cumulative counts ≥ each channel size (CHANNELS_M order). */
  counts: number[];
  roomState: 'operational';
}

function drawCounts(rng: Rng, p: AirPath, m: number, volumeM3: number): number[] {
  const cum = CHANNELS_M.map((d) => concentrationAbove(p, m, d));
  const diff: number[] = [];
  for (let i = 0; i < cum.length; i++) {
    const lam = volumeM3 * (cum[i]! - (i + 1 < cum.length ? cum[i + 1]! : 0));
    diff.push(rng.poisson(Math.max(lam, 0)));
  }
  const out = new Array<number>(diff.length);
  let s = 0;
  for (let i = diff.length - 1; i >= 0; i--) {
    s += diff[i]!;
    out[i] = s;
  }
  return out;
}

/**
 * Every row one counter writes over the window, in the order its file holds them — including the
 * planted problems: the all-zero run of a blocked inlet (no flag raised) and the re-sent burst.
 */
export function counterRows(loc: LineLocation): CounterRow[] {
  const spec = loc.counter as CounterSpec;
  const p = airPath(loc);
  const rng = stream(`counts:${loc.id}`);
  const volume = spec.flowM3PerS * SAMPLE_S;
  const rows: CounterRow[] = [];
  for (let m = 0; m < MINUTES; m++) {
    const startMs = WINDOW_START_MS + m * SAMPLE_S * 1000;
    let counts = drawCounts(rng, p, m, volume);
    if (loc.id === ZERO_RUN.locationId && startMs >= ZERO_RUN.startMs && startMs < ZERO_RUN.endMs)
      counts = counts.map(() => 0);
    rows.push({
      counterId: spec.id,
      locationId: loc.id,
      startMs,
      durationS: SAMPLE_S,
      volumeM3: volume,
      counts,
      roomState: 'operational',
    });
  }
  if (loc.id === DUPLICATE_BURST.locationId) {
    const resent = rows.filter(
      (r) => r.startMs >= DUPLICATE_BURST.fromMs && r.startMs < DUPLICATE_BURST.toMs,
    );
    const after = rows.findIndex((r) => r.startMs === DUPLICATE_BURST.afterMs);
    rows.splice(after + 1, 0, ...resent.map((r) => ({ ...r, counts: [...r.counts] })));
  }
  return rows;
}
