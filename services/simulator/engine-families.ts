/**
 * Invented engine families (light and heavy duty) with the parameters the thermal and load
 * models need. Values are round numbers of the right order for engines of that size
 * (from memory, common practice), not data for any real engine.
 */

export type DutyClass = 'light' | 'heavy';

export interface EngineFamily {
  /** Display name, invented. */
  name: string;
  dutyClass: DutyClass;
  /** Nominal thermostat regulating (start-to-open) temperature, °C. */
  thermostatOpenC: number;
  /** Radiator cap opening pressure, kPa gauge. */
  capPressureKpa: number;
  /** Ethylene glycol in the coolant, % by volume. */
  glycolPercent: number;
  /** Heat capacity of the engine metal that warms with the coolant (about the whole engine's mass × 0.46–0.9 kJ/(kg·K)), J/K. */
  metalHeatCapacityJPerK: number;
  /** Coolant volume of the whole circuit, L. */
  coolantVolumeL: number;
  /** Rated (maximum) shaft power, W. */
  ratedPowerW: number;
  /** Engine speed at rated power, rpm. */
  ratedRpm: number;
  /** Idle speed, rpm. */
  idleRpm: number;
  /** Fuel power burnt at warm idle with no accessory load, W (1 L/h diesel ≈ 10 kW). */
  idleFuelW: number;
  /** Brake thermal efficiency at part and full load, dimensionless. */
  brakeEfficiency: number;
  /** Coolant pump flow at rated speed, L/s (pump flow scales with engine speed). */
  pumpFlowLps: number;
  /** Block and hose losses to the air while running, W/K of (coolant − ambient). */
  blockLossWPerK: number;
  /** Losses while parked (natural convection only), W/K; sets the soak time constant. */
  soakLossWPerK: number;
  /** Cabin heater core conductance at full demand, W/K of (coolant − ambient). */
  heaterMaxWPerK: number;
  /** Shaft power drawn by the air-conditioning compressor when running, W. */
  acPowerW: number;
  /** Other accessories (alternator, steering, air compressor), shaft W. */
  accessoryPowerW: number;
  /** Vehicle unladen mass, kg, and payload range, kg. */
  vehicleMassKg: number;
  payloadMaxKg: number;
  /** Drag area Cd·A, m². */
  dragAreaM2: number;
  /** Rolling resistance coefficient, dimensionless. */
  rollingResistance: number;
  /** Road speed at which each gear reaches the shift rpm, km/h, lowest gear first. */
  gearTopSpeedsKph: readonly number[];
  /** Engine speed at which the driver (or gearbox) shifts up, rpm. */
  shiftRpm: number;
}

/** A light-duty 2.2 L diesel in 3.5 t vans. */
export const VANTOR_L22: EngineFamily = {
  name: 'Vantor L22',
  dutyClass: 'light',
  thermostatOpenC: 88,
  capPressureKpa: 110,
  glycolPercent: 50,
  metalHeatCapacityJPerK: 60_000,
  coolantVolumeL: 9,
  ratedPowerW: 110_000,
  ratedRpm: 3600,
  idleRpm: 800,
  idleFuelW: 8_000,
  brakeEfficiency: 0.33,
  pumpFlowLps: 2.0,
  blockLossWPerK: 25,
  soakLossWPerK: 12,
  heaterMaxWPerK: 50,
  acPowerW: 3_000,
  accessoryPowerW: 1_000,
  vehicleMassKg: 2_200,
  payloadMaxKg: 1_300,
  dragAreaM2: 1.4,
  rollingResistance: 0.009,
  gearTopSpeedsKph: [22, 42, 65, 90, 115, 140],
  shiftRpm: 2600,
};

/** A light-duty 3.0 L diesel in 5–7 t box trucks. */
export const VANTOR_L30: EngineFamily = {
  ...VANTOR_L22,
  name: 'Vantor L30',
  thermostatOpenC: 90,
  capPressureKpa: 105,
  metalHeatCapacityJPerK: 80_000,
  coolantVolumeL: 12,
  ratedPowerW: 130_000,
  ratedRpm: 3400,
  idleFuelW: 10_000,
  pumpFlowLps: 2.5,
  blockLossWPerK: 30,
  soakLossWPerK: 15,
  heaterMaxWPerK: 60,
  vehicleMassKg: 3_800,
  payloadMaxKg: 3_000,
  dragAreaM2: 3.0,
  rollingResistance: 0.008,
  gearTopSpeedsKph: [18, 35, 55, 80, 105, 125],
  shiftRpm: 2400,
};

/** A heavy-duty 7 L diesel in rigid trucks and city buses. */
export const HALVERN_M7: EngineFamily = {
  name: 'Halvern M7',
  dutyClass: 'heavy',
  thermostatOpenC: 85,
  capPressureKpa: 90,
  glycolPercent: 45,
  metalHeatCapacityJPerK: 250_000,
  coolantVolumeL: 30,
  ratedPowerW: 210_000,
  ratedRpm: 2500,
  idleRpm: 650,
  idleFuelW: 18_000,
  brakeEfficiency: 0.38,
  pumpFlowLps: 4.5,
  blockLossWPerK: 60,
  soakLossWPerK: 28,
  heaterMaxWPerK: 150,
  acPowerW: 6_000,
  accessoryPowerW: 3_000,
  vehicleMassKg: 11_000,
  payloadMaxKg: 7_000,
  dragAreaM2: 5.0,
  rollingResistance: 0.007,
  gearTopSpeedsKph: [12, 22, 35, 50, 68, 90],
  shiftRpm: 1900,
};

/** A heavy-duty 13 L diesel in long-haul tractors. */
export const BRENMARK_H13: EngineFamily = {
  name: 'Brenmark H13',
  dutyClass: 'heavy',
  thermostatOpenC: 82,
  capPressureKpa: 75,
  glycolPercent: 50,
  metalHeatCapacityJPerK: 450_000,
  coolantVolumeL: 45,
  ratedPowerW: 340_000,
  ratedRpm: 1900,
  idleRpm: 600,
  idleFuelW: 25_000,
  brakeEfficiency: 0.42,
  pumpFlowLps: 6.5,
  blockLossWPerK: 90,
  soakLossWPerK: 50,
  heaterMaxWPerK: 80,
  acPowerW: 6_000,
  accessoryPowerW: 4_000,
  vehicleMassKg: 15_000,
  payloadMaxKg: 25_000,
  dragAreaM2: 5.5,
  rollingResistance: 0.006,
  gearTopSpeedsKph: [8, 12, 17, 23, 31, 40, 52, 66, 78, 92],
  shiftRpm: 1500,
};

/** All families by name. */
export const ENGINE_FAMILIES: Readonly<Record<string, EngineFamily>> = {
  [VANTOR_L22.name]: VANTOR_L22,
  [VANTOR_L30.name]: VANTOR_L30,
  [HALVERN_M7.name]: HALVERN_M7,
  [BRENMARK_H13.name]: BRENMARK_H13,
};

/** Looks a family up by name; throws for an unknown name (a planning error). */
export function engineFamily(name: string): EngineFamily {
  const family = ENGINE_FAMILIES[name];
  if (!family) throw new Error(`unknown engine family '${name}'`);
  return family;
}
