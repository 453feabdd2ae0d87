/** 1 psi in kPa (NIST SP 811: 6.894757 kPa). */
export const KPA_PER_PSI = 6.894757;
/** 1 bar in kPa (by definition). */
export const KPA_PER_BAR = 100;
/** Densities at 20 °C, g/cm³ (references.md: ethylene glycol about 1.113, water 0.998). */
export const ETHYLENE_GLYCOL_DENSITY_G_CM3 = 1.113;
export const WATER_DENSITY_G_CM3 = 0.998;

export type PressureUnit = 'kPa' | 'psi' | 'bar';

/**
 * A gauge pressure in kPa.
 * @example pressureToKpa(15, 'psi') // 103.42
 */
export function pressureToKpa(value: number, unit: PressureUnit): number {
  return unit === 'psi' ? value * KPA_PER_PSI : unit === 'bar' ? value * KPA_PER_BAR : value;
}

/**
 * The mass share of ethylene glycol in a mix given by volume, %, from the pure liquids'
 * densities (the small volume contraction on mixing is ignored).
 * @example glycolVolumeToMassPercent(50) // 52.72
 */
export function glycolVolumeToMassPercent(volumePercent: number): number {
  const g = volumePercent * ETHYLENE_GLYCOL_DENSITY_G_CM3;
  const w = (100 - volumePercent) * WATER_DENSITY_G_CM3;
  return g + w === 0 ? 0 : (100 * g) / (g + w);
}

/** The inverse: the volume share of a mix given by mass, % (same densities, same simplification). */
export function glycolMassToVolumePercent(massPercent: number): number {
  const g = massPercent / ETHYLENE_GLYCOL_DENSITY_G_CM3;
  const w = (100 - massPercent) / WATER_DENSITY_G_CM3;
  return g + w === 0 ? 0 : (100 * g) / (g + w);
}

/** °C to °F. */
export const celsiusToFahrenheit = (c: number): number => (c * 9) / 5 + 32;
