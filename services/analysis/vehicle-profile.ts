/** What the analysis needs to know about one vehicle's cooling system (HTTP profile fields). */
export interface VehicleProfile {
  /** Peer group for baselines and config overrides. */
  engineFamily: string;
  /** Nominal thermostat regulating (opening) temperature, °C. */
  thermostatOpenC: number;
  /** Pressure-cap rating, kPa gauge. */
  capPressureKpa: number;
  /** Ethylene glycol share of the coolant, % by mass. */
  glycolPercent: number;
  /** The site's atmospheric pressure, kPa; absent: the config's (sea level). */
  atmosphericPressureKpa?: number;
}

/** Profile used for vehicles nobody has described yet (the agreed defaults). */
export const DEFAULT_VEHICLE_PROFILE: Readonly<VehicleProfile> = Object.freeze({
  engineFamily: 'unknown',
  thermostatOpenC: 88,
  capPressureKpa: 100,
  glycolPercent: 50,
});
