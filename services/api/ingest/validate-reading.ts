import type { BusReading } from '../../bus-decoding/bus-encoding.js';
import { MALFORMED, MALFORMED_CSV } from './malformed-record.js';
import { DAY_MS } from '../../time/durations.js';

export type TemperatureUnit = 'C' | 'F' | 'K';
export const UNITS: readonly TemperatureUnit[] = ['C', 'F', 'K'];

/**
 * Valid ranges, °C unless named otherwise.
 * Coolant: SAE J1939-71 SPN 110 (1 °C/bit, offset −40 °C, 0x00–0xFA) spans −40 to 210 °C.
 * Ambient: SPN 171 spans −273 to 1735 °C, which rejects nothing real; we use the range of air
 * temperatures ever recorded on earth with a margin (−90 to 60 °C, common knowledge) widened to
 * −60…+90 at the warm end for sensors in hot engine bays.
 * Speed: SPN 84 spans 0 to 250.996 km/h. Engine speed: SPN 190 spans 0 to 8031.875 rpm.
 */
export const COOLANT_MIN_C = -40;
export const COOLANT_MAX_C = 210;
export const AMBIENT_MIN_C = -90;
export const AMBIENT_MAX_C = 90;
export const SPEED_MAX_KPH = 251;
export const RPM_MAX = 8032;
/** SAE J1939-71 ranges of the bus channels (migration 0005): SPN 108 0–125 kPa, SPN 111 0–100 %, SPN 109 0–500 kPa. */
export const BAROMETRIC_MAX_KPA = 125;
export const COOLANT_LEVEL_MAX_PCT = 100;
export const COOLANT_PRESSURE_MAX_KPA = 500;
/** Readings stamped further ahead than this are rejected: the gateway's clock is wrong. */
export const MAX_FUTURE_SKEW_MS = 5 * 60_000;
/** Readings before 2000-01-01 are rejected: a gateway that lost its clock reports 1970. */
export const EARLIEST_TS_MS = Date.UTC(2000, 0, 1);
export const VEHICLE_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9_.:-]{0,63}$/;

/** A reading that passed validation, in °C. Absent optional channels are NaN. */
export interface ValidReading extends BusReading {
  vehicleId: string;
  tsMs: number;
}

// RFC 3339 date-time: a time zone (Z or ±hh:mm) is required, fractional seconds optional.
const RFC3339 = /^(\d{4})-(\d{2})-(\d{2})[Tt ](\d{2}):\d{2}:\d{2}(\.\d{1,9})?([Zz]|[+-]\d{2}:\d{2})$/;

export function toCelsius(value: number, unit: TemperatureUnit): number {
  if (unit === 'C') return value;
  if (unit === 'F') return ((value - 32) * 5) / 9;
  return value - 273.15;
}

/** Parses `ts` (RFC 3339 string or epoch milliseconds); NaN when it is neither. */
export function parseTimestamp(ts: unknown): number {
  if (typeof ts === 'number') return Number.isFinite(ts) ? ts : NaN;
  if (typeof ts !== 'string') return NaN;
  const m = RFC3339.exec(ts);
  if (m) {
    const ms = Date.parse(ts.replace(' ', 'T'));
    if (!Number.isFinite(ms)) return NaN;
    // Date.parse rolls 2026-02-30 over into March and 24:00 into the next day; RFC 3339 allows
    // neither (day ≤ days in the month, hour 00–23), so check the fields themselves.
    const [year, month, day, hour] = [Number(m[1]), Number(m[2]), Number(m[3]), Number(m[4])];
    if (day > new Date(Date.UTC(year, month, 0)).getUTCDate() || hour > 23) return NaN;
    return ms;
  }
  if (/^\d{10,15}$/.test(ts)) return Number(ts);
  return NaN;
}

/**
 * Channels are stored as float4 (about 7 significant digits), and Postgres refuses a value too
 * small for it (5e-324 fails the whole batch with "value out of range: underflow"). Rounding to
 * 1e-6 of the unit loses nothing float4 keeps for values of the channels' size and makes such
 * values 0.
 */
const STORED_RESOLUTION = 1e6;
function stored(value: number): number {
  return Math.round(value * STORED_RESOLUTION) / STORED_RESOLUTION;
}

function optionalNumber(value: unknown): number | string {
  if (value === undefined || value === null || value === '') return NaN;
  if (typeof value === 'number') return Number.isFinite(value) ? value : 'not a finite number';
  if (typeof value === 'string' && /^\s*-?\d+(\.\d+)?([eE][+-]?\d+)?\s*$/.test(value)) return Number(value);
  return 'not a number';
}

/**
 * Checks one raw reading and converts it to °C. Returns the reading, or the reason it is
 * rejected (a short sentence naming the field). Readings more than `maxAgeDays` old are refused:
 * that bounds the monthly partitions one body can make the service create.
 */
export function validateReading(
  raw: unknown,
  defaultUnit: TemperatureUnit,
  nowMs: number,
  maxAgeDays = Infinity,
): ValidReading | string {
  if (raw === MALFORMED) return 'not valid JSON';
  if (raw === MALFORMED_CSV)
    return 'the CSV row does not have the same number of fields as the header (or has an unclosed quote)';
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) return 'a reading must be a JSON object';
  const r = raw as Record<string, unknown>;

  const vehicleId = r.vehicleId;
  if (vehicleId === undefined || vehicleId === null || vehicleId === '') return 'vehicleId is missing';
  if (typeof vehicleId !== 'string' || !VEHICLE_ID_PATTERN.test(vehicleId)) {
    return 'vehicleId must be 1–64 letters, digits, "_", ".", ":" or "-", starting with a letter or digit';
  }

  let unit = defaultUnit;
  if (r.unit !== undefined && r.unit !== null && r.unit !== '') {
    if (typeof r.unit !== 'string' || !UNITS.includes(r.unit as TemperatureUnit)) return 'unit must be C, F or K';
    unit = r.unit as TemperatureUnit;
  }

  if (r.ts === undefined || r.ts === null || r.ts === '') return 'ts is missing';
  const tsMs = parseTimestamp(r.ts);
  if (Number.isNaN(tsMs)) return 'ts is neither an RFC 3339 date-time with a time zone nor epoch milliseconds';
  if (tsMs < EARLIEST_TS_MS) return 'ts is before 2000-01-01 (gateway clock not set?)';
  if (tsMs < nowMs - maxAgeDays * DAY_MS)
    return `ts is more than ${maxAgeDays} days old (the service's INGEST_MAX_AGE_DAYS)`;
  if (tsMs > nowMs + MAX_FUTURE_SKEW_MS) return 'ts is more than 5 minutes in the future (gateway clock ahead?)';

  if (r.coolant === undefined || r.coolant === null || r.coolant === '') return 'coolant is missing';
  const coolantRaw = optionalNumber(r.coolant);
  if (typeof coolantRaw === 'string') return `coolant is ${coolantRaw}`;
  const coolantC = toCelsius(coolantRaw, unit);
  if (!(coolantC >= COOLANT_MIN_C && coolantC <= COOLANT_MAX_C)) {
    return `coolant ${coolantRaw} ${unit} is outside the sensor's valid range (${COOLANT_MIN_C} to ${COOLANT_MAX_C} °C, SAE J1939 SPN 110)`;
  }

  const ambientRaw = optionalNumber(r.ambient);
  if (typeof ambientRaw === 'string') return `ambient is ${ambientRaw}`;
  const ambientC = toCelsius(ambientRaw, unit);
  if (!Number.isNaN(ambientC) && !(ambientC >= AMBIENT_MIN_C && ambientC <= AMBIENT_MAX_C)) {
    return `ambient ${ambientRaw} ${unit} is outside the plausible range (${AMBIENT_MIN_C} to ${AMBIENT_MAX_C} °C)`;
  }

  const speedKph = optionalNumber(r.speedKph);
  if (typeof speedKph === 'string') return `speedKph is ${speedKph}`;
  if (!Number.isNaN(speedKph) && !(speedKph >= 0 && speedKph <= SPEED_MAX_KPH))
    return `speedKph ${speedKph} is outside 0 to ${SPEED_MAX_KPH} (SAE J1939 SPN 84)`;

  const rpm = optionalNumber(r.rpm);
  if (typeof rpm === 'string') return `rpm is ${rpm}`;
  if (!Number.isNaN(rpm) && !(rpm >= 0 && rpm <= RPM_MAX))
    return `rpm ${rpm} is outside 0 to ${RPM_MAX} (SAE J1939 SPN 190)`;

  const barometricKpa = optionalNumber(r.barometricKpa);
  if (typeof barometricKpa === 'string') return `barometricKpa is ${barometricKpa}`;
  if (!Number.isNaN(barometricKpa) && !(barometricKpa >= 0 && barometricKpa <= BAROMETRIC_MAX_KPA))
    return `barometricKpa ${barometricKpa} is outside 0 to ${BAROMETRIC_MAX_KPA} (SAE J1939 SPN 108)`;

  const coolantLevelPct = optionalNumber(r.coolantLevelPct);
  if (typeof coolantLevelPct === 'string') return `coolantLevelPct is ${coolantLevelPct}`;
  if (!Number.isNaN(coolantLevelPct) && !(coolantLevelPct >= 0 && coolantLevelPct <= COOLANT_LEVEL_MAX_PCT))
    return `coolantLevelPct ${coolantLevelPct} is outside 0 to ${COOLANT_LEVEL_MAX_PCT} (SAE J1939 SPN 111)`;

  const coolantPressureKpa = optionalNumber(r.coolantPressureKpa);
  if (typeof coolantPressureKpa === 'string') return `coolantPressureKpa is ${coolantPressureKpa}`;
  if (!Number.isNaN(coolantPressureKpa) && !(coolantPressureKpa >= 0 && coolantPressureKpa <= COOLANT_PRESSURE_MAX_KPA))
    return `coolantPressureKpa ${coolantPressureKpa} is outside 0 to ${COOLANT_PRESSURE_MAX_KPA} (SAE J1939 SPN 109)`;

  return {
    vehicleId,
    tsMs,
    coolantC: stored(coolantC),
    ambientC: stored(ambientC),
    speedKph: stored(speedKph),
    rpm: stored(rpm),
    barometricKpa: stored(barometricKpa),
    coolantLevelPct: stored(coolantLevelPct),
    coolantPressureKpa: stored(coolantPressureKpa),
  };
}
