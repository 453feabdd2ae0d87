/** One vehicle's readings as parallel typed arrays, ascending in time. */
export interface SampleArrays {
  /** Epoch milliseconds, ascending. */
  ts: Float64Array;
  /** Engine coolant temperature, °C (SPN 110 / PID 0x05). */
  coolant: Float64Array;
  /** Ambient air temperature, °C; NaN where absent. */
  ambient: Float64Array;
  /** Road speed, km/h; NaN where absent. */
  speedKph: Float64Array;
  /** Engine speed, rpm; NaN where absent. */
  rpm: Float64Array;
  /** Vehicle-bus channels (SAE J1939 SPN 108 / 111 / 109), NaN where absent; the worker always reads them, other callers may leave them out. */
  barometricKpa?: Float64Array;
  coolantLevelPct?: Float64Array;
  coolantPressureKpa?: Float64Array;
}

/** Sample arrays with every channel present, as the worker reads them. */
export type AllSampleArrays = Required<SampleArrays>;

export const MS_PER_S = 1000;
export const MS_PER_DAY = 86_400_000;

/** Start of the UTC day containing `ms`, epoch ms. */
export function utcDayStartMs(ms: number): number {
  return Math.floor(ms / MS_PER_DAY) * MS_PER_DAY;
}

/** ISO date (YYYY-MM-DD) of the UTC day containing `ms`. */
export function utcDay(ms: number): string {
  return new Date(utcDayStartMs(ms)).toISOString().slice(0, 10);
}
