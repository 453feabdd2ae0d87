/** A column-wise chunk of validated readings in °C; absent optional channels are NaN. */
export interface ReadingChunk {
  length: number;
  vehicleIds: string[];
  tsMs: Float64Array;
  coolantC: Float64Array;
  ambientC: Float64Array;
  speedKph: Float64Array;
  rpm: Float64Array;
  /** Channels the vehicle bus adds (migration 0005); absent = all NULL. */
  barometricKpa?: Float64Array;
  coolantLevelPct?: Float64Array;
  coolantPressureKpa?: Float64Array;
}

/** One array per stored column of a reading, in table order: ts, then the seven channels. */
export type ReadingColumnArrays = [
  Float64Array,
  Float64Array,
  Float64Array,
  Float64Array,
  Float64Array,
  Float64Array,
  Float64Array,
  Float64Array,
];
