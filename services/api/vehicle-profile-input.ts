import { atmosphericPressureAtAltitudeKpa } from '../analysis/physics/atmosphere.js';
import { glycolVolumeToMassPercent, pressureToKpa, type PressureUnit } from '../analysis/physics/units.js';
import type { VehicleProfilePatch } from '../db/vehicles-repository.js';
import { BadRequestError } from './errors.js';
import { CAP_MAX_KPA, GLYCOL_MAX_PERCENT } from './schemas/vehicle.js';

/** The PUT body as the planner may give it: cap in kPa, psi or bar; glycol by mass or volume; the site by altitude or pressure. */
export interface VehicleProfileInput {
  engineFamily?: string;
  thermostatOpenC?: number;
  capPressureKpa?: number;
  glycolPercent?: number;
  label?: string | null;
  glycolBasis?: 'mass' | 'volume';
  capPressure?: number;
  capPressureUnit?: PressureUnit;
  depot?: string | null;
  siteAltitudeM?: number | null;
  atmosphericPressureKpa?: number | null;
}

const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

/**
 * Converts the body into the stored profile (kPa gauge, glycol by mass, site pressure); 400
 * when the cap is given twice or beyond the limit, or a volume basis comes without a share.
 */
export function toProfilePatch(input: VehicleProfileInput): VehicleProfilePatch {
  const { capPressure, capPressureUnit, glycolBasis, siteAltitudeM, atmosphericPressureKpa, ...rest } = input;
  const patch: VehicleProfilePatch = { ...rest };
  if (capPressure !== undefined) {
    if (input.capPressureKpa !== undefined)
      throw new BadRequestError(
        'give the cap as capPressureKpa or as capPressure with capPressureUnit, not both',
        'validation_failed',
      );
    const kpa = pressureToKpa(capPressure, capPressureUnit ?? 'kPa');
    if (kpa > CAP_MAX_KPA)
      throw new BadRequestError(
        `capPressure is ${round(kpa, 1)} kPa, above the ${CAP_MAX_KPA} kPa limit`,
        'validation_failed',
      );
    patch.capPressureKpa = round(kpa, 2);
  } else if (capPressureUnit !== undefined && capPressureUnit !== 'kPa') {
    throw new BadRequestError(
      'capPressureUnit applies to capPressure; capPressureKpa is always kPa',
      'validation_failed',
    );
  }
  if (glycolBasis !== undefined) {
    if (input.glycolPercent === undefined)
      throw new BadRequestError('glycolBasis needs glycolPercent', 'validation_failed');
    patch.glycolBasis = glycolBasis;
    if (glycolBasis === 'volume') {
      const mass = glycolVolumeToMassPercent(input.glycolPercent);
      if (mass > GLYCOL_MAX_PERCENT)
        throw new BadRequestError(
          `${input.glycolPercent} % by volume is ${round(mass, 1)} % by mass, above the ${GLYCOL_MAX_PERCENT} % limit`,
          'validation_failed',
        );
      patch.glycolPercent = round(mass, 2);
    }
  } else if (input.glycolPercent !== undefined) {
    patch.glycolBasis = 'mass';
  }
  return { ...patch, ...toSitePatch({ siteAltitudeM, atmosphericPressureKpa }) };
}

/** A site as given (of a vehicle or a depot): the altitude sets the pressure by ISO 2533 unless the pressure is given too. */
export function toSitePatch(site: {
  siteAltitudeM?: number | null | undefined;
  atmosphericPressureKpa?: number | null | undefined;
}): { siteAltitudeM?: number | null; atmosphericPressureKpa?: number | null } {
  const out: { siteAltitudeM?: number | null; atmosphericPressureKpa?: number | null } = {};
  if (site.siteAltitudeM !== undefined) {
    out.siteAltitudeM = site.siteAltitudeM;
    out.atmosphericPressureKpa =
      site.siteAltitudeM === null ? null : round(atmosphericPressureAtAltitudeKpa(site.siteAltitudeM), 2);
  }
  if (site.atmosphericPressureKpa !== undefined) out.atmosphericPressureKpa = site.atmosphericPressureKpa;
  return out;
}
