/**
 * The channels a reading is made of, as indexes into per-channel arrays. Coolant comes in two
 * resolutions: SAE J1939-71 SPN 110 / SAE J1979 PID 0x05 (1 °C) and SPN 1637 (0.03125 °C),
 * which wins where a vehicle sends it.
 */
export const CH_COOLANT = 0;
export const CH_COOLANT_HIGH_RES = 1;
export const CH_AMBIENT = 2;
export const CH_BAROMETRIC = 3;
export const CH_RPM = 4;
export const CH_SPEED = 5;
export const CH_COOLANT_LEVEL = 6;
export const CH_COOLANT_PRESSURE = 7;
export const CHANNEL_COUNT = 8;

export const CHANNEL_NAMES = [
  'coolant',
  'coolantHighRes',
  'ambient',
  'barometricKpa',
  'rpm',
  'speedKph',
  'coolantLevelPct',
  'coolantPressureKpa',
] as const;

const SECOND_MS = 1000;

/**
 * How old another channel's value may be at a coolant timestamp and still go into its reading,
 * ms, per channel (coolant channels: unused). Engine and road speed are broadcast every 10–100 ms
 * (EEC1, CCVS1), so 15 s covers a lost second or two and the slot rule's look-back of up to one
 * default sample period (see align-readings.ts). Ambient and coolant pressure change slowly and
 * come every 1 s to 1 min: 2 min. Barometric pressure and coolant level are often sent every
 * few minutes or on change: 10 min.
 */
export const CHANNEL_STALE_MS: readonly number[] = [
  0,
  0,
  120 * SECOND_MS, // ambient
  600 * SECOND_MS, // barometric pressure
  15 * SECOND_MS, // engine speed
  15 * SECOND_MS, // road speed
  600 * SECOND_MS, // coolant level
  120 * SECOND_MS, // coolant pressure
];

/** The largest staleness: how far a late frame can change later readings. */
export const MAX_STALE_MS = Math.max(...CHANNEL_STALE_MS);

/** Default sample period readings are decimated to, s (vehicles.sample_period_s). */
export const DEFAULT_SAMPLE_PERIOD_S = 10;
