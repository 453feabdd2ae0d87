/**
 * Freezing point of ethylene glycol–water by mass, °C: Melinder, "Properties of Secondary
 * Working Fluids for Indirect Systems", IIR 2010 (values in ../shared/references.md),
 * linearly interpolated between table rows.
 */
const MELINDER_EG_BY_MASS: ReadonlyArray<readonly [percent: number, freezeC: number]> = [
  [0, 0],
  [10, -3.4],
  [20, -7.9],
  [30, -14.6],
  [40, -23.8],
  [50, -36.0],
  [60, -51.2],
];
/** Richest mix the table covers, % by mass; beyond it protection falls again. */
export const FREEZE_TABLE_MAX_GLYCOL_PERCENT = 60;

/**
 * Freezing point, °C, of a mix with `glycolPercent` ethylene glycol by mass, or `null` above
 * the table's 60 % (richer mixes freeze at higher temperatures again; not extrapolated).
 * @example freezingPointC(45) // −29.9
 */
export function freezingPointC(glycolPercent: number): number | null {
  if (!(glycolPercent >= 0) || glycolPercent > FREEZE_TABLE_MAX_GLYCOL_PERCENT) return null;
  for (let i = 1; i < MELINDER_EG_BY_MASS.length; i++) {
    const [p1, f1] = MELINDER_EG_BY_MASS[i]!;
    if (glycolPercent <= p1) {
      const [p0, f0] = MELINDER_EG_BY_MASS[i - 1]!;
      return f0 + ((glycolPercent - p0) / (p1 - p0)) * (f1 - f0);
    }
  }
  return null;
}
