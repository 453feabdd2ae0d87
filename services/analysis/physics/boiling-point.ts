/**
 * Boiling point of engine coolant under a pressure cap. Water's saturation line from the
 * IAPWS-IF97 region 4 backward equation; ethylene glycol's elevation from Raoult's law
 * (glycol is practically non-volatile, so the mixture boils where x_water · p_sat(T) = p).
 */

// IAPWS-IF97, Table 34: coefficients of the region 4 saturation equation.
const N = [
  0.11670521452767e4, -0.72421316703206e6, -0.17073846940092e2, 0.1202082470247e5, -0.32325550322333e7,
  0.1491510861353e2, -0.48232657361591e4, 0.40511340542057e6, -0.23855557567849, 0.65017534844798e3,
] as const;
const KELVIN_OFFSET_K = 273.15;
const WATER_MOLAR_MASS_G_PER_MOL = 18.015;
const ETHYLENE_GLYCOL_MOLAR_MASS_G_PER_MOL = 62.068;
/** IF97 region 4 is valid from the triple point to the critical point, MPa. */
const MIN_PRESSURE_MPA = 611.213e-6;
const MAX_PRESSURE_MPA = 22.064;

/**
 * Saturation temperature of pure water, K, at pressure `pMpa` (MPa), IAPWS-IF97 eq. 31.
 * @example saturationTemperatureK(0.1) // 372.755919…
 */
export function saturationTemperatureK(pMpa: number): number {
  if (!(pMpa >= MIN_PRESSURE_MPA && pMpa <= MAX_PRESSURE_MPA)) {
    throw new RangeError(`pressure ${pMpa} MPa is outside IAPWS-IF97 region 4`);
  }
  const [n1, n2, n3, n4, n5, n6, n7, n8, n9, n10] = N;
  const beta = pMpa ** 0.25;
  const e = beta * beta + n3 * beta + n6;
  const f = n1 * beta * beta + n4 * beta + n7;
  const g = n2 * beta * beta + n5 * beta + n8;
  const d = (2 * g) / (-f - Math.sqrt(f * f - 4 * e * g));
  return (n10 + d - Math.sqrt((n10 + d) ** 2 - 4 * (n9 + n10 * d))) / 2;
}

/**
 * Mole fraction of water in an ethylene glycol–water mix given glycol % by mass.
 * @example waterMoleFraction(50) // ≈ 0.775
 */
export function waterMoleFraction(glycolPercentByMass: number): number {
  const w = Math.min(Math.max(glycolPercentByMass, 0), 100) / 100;
  const water = (1 - w) / WATER_MOLAR_MASS_G_PER_MOL;
  const glycol = w / ETHYLENE_GLYCOL_MOLAR_MASS_G_PER_MOL;
  return water / (water + glycol);
}

/**
 * Boiling point of the coolant, °C, under a cap holding `capPressureKpa` (gauge) at
 * `atmosphericKpa` outside, with `glycolPercent` ethylene glycol by mass.
 * @example coolantBoilingPointC(103, 50) // ≈ 129 °C (15 psi cap, 50/50 mix)
 */
export function coolantBoilingPointC(capPressureKpa: number, glycolPercent: number, atmosphericKpa = 101.325): number {
  const absoluteKpa = atmosphericKpa + Math.max(capPressureKpa, 0);
  const equivalentWaterKpa = absoluteKpa / waterMoleFraction(glycolPercent);
  return saturationTemperatureK(equivalentWaterKpa / 1000) - KELVIN_OFFSET_K;
}
