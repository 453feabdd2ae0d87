/** Sea-level standard atmospheric pressure, kPa (ISO 2533). */
export const SEA_LEVEL_PRESSURE_KPA = 101.325;
/** ISO 2533 troposphere: p = p0 · (1 − 2.25577·10⁻⁵ · h)^5.25588, h in m (valid to 11,000 m). */
const ISA_LAPSE_PER_M = 2.25577e-5;
const ISA_EXPONENT = 5.25588;
export const ISA_TROPOSPHERE_TOP_M = 11_000;

/**
 * Standard-atmosphere pressure at an altitude (International Standard Atmosphere, troposphere).
 * @example atmosphericPressureAtAltitudeKpa(1000) // 89.87
 */
export function atmosphericPressureAtAltitudeKpa(altitudeM: number): number {
  if (!(altitudeM >= -500 && altitudeM <= ISA_TROPOSPHERE_TOP_M))
    throw new RangeError(`altitude must be −500 to ${ISA_TROPOSPHERE_TOP_M} m, got ${altitudeM}`);
  return SEA_LEVEL_PRESSURE_KPA * (1 - ISA_LAPSE_PER_M * altitudeM) ** ISA_EXPONENT;
}
