import type { EngineFamily } from './engine-families.js';
import { WaxThermostat, type ThermostatSettings } from './thermostat.js';

/**
 * One lumped node: engine metal + coolant at one temperature T (°C), heat capacity C (J/K).
 * One node is enough because the sensor sits in the coolant outlet and the block and its
 * coolant warm together within a few tens of seconds; the sampled signal (10 s) cannot
 * resolve a second, faster node.
 *
 *   C · dT/dt = Q_in − G_block·(T − T_amb) − G_rad·(T − T_air) − G_heater·(T − T_amb)
 *
 * - Q_in (W): heat from combustion to the coolant (see load-model.ts); 0 when the engine is off.
 * - G_block (W/K) = G_block0 · (1 + v / V_BLOCK_REF): block/hose losses grow with air speed v (m/s).
 * - G_rad (W/K) = 1 / (1/W_cool + 1/UA_air + 1/W_air): radiator as three conductances in
 *   series (a smooth stand-in for ε-NTU: it tends to whichever of the coolant capacity rate,
 *   the air-side film conductance or the air capacity rate is smallest), where
 *   W_cool = ρ·c_p·V̇_pump(rpm)·φ (W/K), φ the thermostat flow fraction,
 *   UA_air = UA_ref · (v_air / V_FAN)^AIR_SIDE_EXPONENT (W/K), and
 *   W_air = ρ_air·c_p,air·A_face·v_air (W/K), with the air speed through the core
 *   v_air = √((k_ram·v·min(1, v/V_RAM_FULL))² + (fan·V_FAN)² + V_NATURAL²) (m/s). At idle with no fan W_air is
 *   tiny, which is why a dead fan overheats a standing engine.
 * - T_air = T_amb + min(ΔT_cond·V_FAN/v_air, ΔT_cond,max): the A/C condenser in front of the
 *   radiator pre-heats the air when the A/C runs (°C); less air, hotter air.
 * - G_heater (W/K) = G_heater,max · demand(T_amb): cabin heater core, demand = clamp((18 − T_amb)/20, 0, 1).
 * - Engine off: Q_in = 0, no pump, no fan; only G_soak (natural convection) to T_amb.
 * Integration: exact exponential step for inputs held over dt (stable at any dt):
 *   T∞ = T_sink + Q_in/G,  T(t+dt) = T∞ + (T − T∞)·e^(−G·dt/C)  (G = ΣG_i, T_sink their weighted mean);
 * with G = 0 this is T + Q_in·dt/C (first law). T never exceeds the boiling point under the cap.
 */

/** Density of water-ethylene glycol, kg/L, linear in glycol % by volume (from memory, ±2 %). */
export function coolantDensityKgPerL(glycolPercent: number): number {
  return 1.0 + 0.0014 * glycolPercent;
}
/** Specific heat of water-ethylene glycol near 80 °C, J/(kg·K) (from memory, ±3 %). */
export function coolantSpecificHeatJPerKgK(glycolPercent: number): number {
  return 4190 - 15.5 * glycolPercent;
}

/** Latent heat of vaporisation of water over the gas constant, K (Clausius–Clapeyron). */
const WATER_L_OVER_R_K = 4889;
/** Boiling-point rise of ethylene glycol–water per % glycol, K (from memory: 50 % ≈ +7 K). */
const GLYCOL_BOIL_RISE_K_PER_PERCENT = 0.14;
/** Standard atmosphere, kPa. */
const ATMOSPHERE_KPA = 101.325;

/**
 * Boiling point of the coolant under the pressure cap at sea level, °C: Clausius–Clapeyron
 * for water (within 0.5 °C of IAPWS-IF97 up to 250 kPa abs) plus the glycol's elevation.
 * The model holds the coolant there: above it the coolant boils off through the cap.
 */
export function coolantBoilingPointC(capPressureKpa: number, glycolPercent: number): number {
  const p = ATMOSPHERE_KPA + capPressureKpa;
  const tK = 1 / (1 / 373.15 - Math.log(p / ATMOSPHERE_KPA) / WATER_L_OVER_R_K);
  return tK - 273.15 + GLYCOL_BOIL_RISE_K_PER_PERCENT * glycolPercent;
}

/** Air speed through the core with the fan engaged and the vehicle stopped, m/s. */
export const V_FAN_MPS = 4;
/** Natural draught through the core with no fan and no ram air, m/s. */
export const V_NATURAL_MPS = 0.15;
/** Fraction of road speed reaching the core as ram air at speed, dimensionless ... */
export const RAM_AIR_FRACTION = 0.3;
/** ... reached from this road speed up; below it ram air fades as v² (dynamic pressure must
 * first overcome the grille and condenser losses), m/s. */
export const RAM_FULL_SPEED_MPS = 40 / 3.6;
/** Exponent of air-side conductance on air speed (between laminar 0.5 and turbulent 0.8). */
export const AIR_SIDE_EXPONENT = 0.7;
/** Air speed at which block losses double, m/s. */
export const V_BLOCK_REF_MPS = 20;
/** A/C condenser air temperature rise with the fan running, K ... */
export const CONDENSER_RISE_K = 8;
/** ... and its ceiling with almost no air flow, K. */
export const CONDENSER_RISE_MAX_K = 35;
/** Fan switches on this far above the rating, °C (ECU-controlled). */
export const FAN_ON_ABOVE_RATING_C = 11;
/** Fan switches off this far above the rating, °C. */
export const FAN_OFF_ABOVE_RATING_C = 7;
/** Radiator design point: this share of the rated coolant heat (the most a vehicle sustains;
 * full rated power is only held for short climbs) ... */
export const DESIGN_HEAT_FRACTION = 0.6;
/** ... is rejected at rating + this, °C ... */
export const DESIGN_MARGIN_C = 14;
/** ... with this ambient, °C (common practice: sized for 40–50 °C air) ... */
export const DESIGN_AMBIENT_C = 40;
/** ... at this road speed with the fan on, m/s (a full-load climb) ... */
export const DESIGN_SPEED_MPS = 40 / 3.6;
/** ... with an air capacity rate this many times the needed conductance (sets the face area). */
export const DESIGN_AIR_CAPACITY_RATIO = 2;

export interface ThermalParams {
  /** Heat capacity of the metal in the node, J/K. */
  metalHeatCapacityJPerK: number;
  /** Heat capacity of the full coolant charge, J/K. */
  coolantHeatCapacityJPerK: number;
  /** ρ·c_p·V̇ of the pump at rated speed, W/K. */
  pumpCapacityRateWPerK: number;
  ratedRpm: number;
  blockLossWPerK: number;
  soakLossWPerK: number;
  /** Air-side film conductance UA_ref at v_air = V_FAN, W/K. */
  radiatorAirWPerK: number;
  /** Air capacity rate per unit air speed, ρ_air·c_p,air·A_face, (W/K)/(m/s). */
  airCapacityWPerKPerMps: number;
  heaterMaxWPerK: number;
  thermostatOpenC: number;
  fanOnC: number;
  fanOffC: number;
  /** Boiling point under the cap, °C (coolant temperature ceiling). */
  boilC: number;
}

function airSpeedMps(speedMps: number, fanAirMps: number): number {
  const ram = RAM_AIR_FRACTION * speedMps * (speedMps < RAM_FULL_SPEED_MPS ? speedMps / RAM_FULL_SPEED_MPS : 1);
  return Math.sqrt(ram * ram + fanAirMps * fanAirMps + V_NATURAL_MPS * V_NATURAL_MPS);
}

/**
 * Derives thermal parameters from an engine family, sizing the radiator so that the rated
 * coolant heat `ratedHeatW` is rejected at (rating + DESIGN_MARGIN_C) in DESIGN_AMBIENT_C air.
 */
export function thermalParamsFor(
  family: EngineFamily,
  ratedHeatW: number,
  thermostatOpenC = family.thermostatOpenC,
): ThermalParams {
  const rhoCp = coolantDensityKgPerL(family.glycolPercent) * coolantSpecificHeatJPerKgK(family.glycolPercent);
  const pump = rhoCp * family.pumpFlowLps;
  const needed = (DESIGN_HEAT_FRACTION * ratedHeatW) / (thermostatOpenC + DESIGN_MARGIN_C - DESIGN_AMBIENT_C);
  const designAirMps = airSpeedMps(DESIGN_SPEED_MPS, V_FAN_MPS);
  const airCapacity = DESIGN_AIR_CAPACITY_RATIO * needed;
  const uaAtDesign = 1 / (1 / needed - 1 / pump - 1 / airCapacity);
  if (!(uaAtDesign > 0)) throw new Error(`${family.name}: pump flow too small for the rated heat`);
  return {
    metalHeatCapacityJPerK: family.metalHeatCapacityJPerK,
    coolantHeatCapacityJPerK: rhoCp * family.coolantVolumeL,
    pumpCapacityRateWPerK: pump,
    ratedRpm: family.ratedRpm,
    blockLossWPerK: family.blockLossWPerK,
    soakLossWPerK: family.soakLossWPerK,
    radiatorAirWPerK: uaAtDesign / Math.pow(designAirMps / V_FAN_MPS, AIR_SIDE_EXPONENT),
    airCapacityWPerKPerMps: airCapacity / designAirMps,
    heaterMaxWPerK: family.heaterMaxWPerK,
    thermostatOpenC,
    fanOnC: thermostatOpenC + FAN_ON_ABOVE_RATING_C,
    fanOffC: thermostatOpenC + FAN_OFF_ABOVE_RATING_C,
    boilC: coolantBoilingPointC(family.capPressureKpa, family.glycolPercent),
  };
}

/** Table of (v/V_FAN)^AIR_SIDE_EXPONENT every AIR_TABLE_STEP_MPS: Math.pow per step cost a fifth of the run time. */
const AIR_TABLE_STEP_MPS = 0.01;
const AIR_TABLE_MAX_MPS = 40;
const AIR_TABLE = Float64Array.from({ length: Math.ceil(AIR_TABLE_MAX_MPS / AIR_TABLE_STEP_MPS) + 2 }, (_, i) =>
  Math.pow((i * AIR_TABLE_STEP_MPS) / V_FAN_MPS, AIR_SIDE_EXPONENT),
);

/** (v_air / V_FAN)^AIR_SIDE_EXPONENT, linearly interpolated (error < 1e-4 above natural draught). */
export function airSideFactor(vAirMps: number): number {
  const x = vAirMps / AIR_TABLE_STEP_MPS;
  if (x >= AIR_TABLE.length - 1) return Math.pow(vAirMps / V_FAN_MPS, AIR_SIDE_EXPONENT);
  const i = x | 0;
  const a = AIR_TABLE[i] as number;
  return a + ((AIR_TABLE[i + 1] as number) - a) * (x - i);
}

/**
 * Radiator conductance, W/K, for coolant capacity rate wCool (W/K) and air speed through the
 * core vAir (m/s), with the air side scaled by airFactor (fouling, dry tubes; 1 = clean, full).
 */
export function radiatorConductanceWPerK(
  params: ThermalParams,
  wCool: number,
  vAir: number,
  airFactor: number,
): number {
  const ua = params.radiatorAirWPerK * airFactor * airSideFactor(vAir);
  const wAir = params.airCapacityWPerKPerMps * airFactor * vAir;
  return wCool > 0 && ua > 0 ? 1 / (1 / wCool + 1 / ua + 1 / wAir) : 0;
}

/** Cabin heater demand from ambient temperature, 0..1. */
export function heaterDemand(ambientC: number): number {
  const d = (18 - ambientC) / 20;
  return d < 0 ? 0 : d > 1 ? 1 : d;
}

export class CoolingSystem {
  readonly p: ThermalParams;
  readonly thermostat: WaxThermostat;
  /** Node (coolant) temperature, °C. */
  coolantC: number;
  fanOn = false;
  /** Fault multipliers, 1 = healthy. */
  radiatorAirFactor = 1;
  fanFactor = 1;
  /** Fraction of the coolant charge still in the system, 0..1. */
  coolantLevel = 1;
  /** Heat leaving the node during the last step (mean), W; for heat-balance checks. */
  lastHeatOutW = 0;
  /** Total conductance during the last step, W/K. */
  lastConductanceWPerK = 0;

  /** `thermostat` overrides the valve's defaults (span, hysteresis, wax lag, bleed). */
  constructor(p: ThermalParams, initialC: number, thermostat: Partial<ThermostatSettings> = {}) {
    this.p = p;
    this.coolantC = initialC;
    this.thermostat = new WaxThermostat({ ...thermostat, openC: p.thermostatOpenC }, initialC);
  }

  /** Heat capacity of the node at the current coolant level, J/K. */
  heatCapacityJPerK(): number {
    return this.p.metalHeatCapacityJPerK + this.coolantLevel * this.p.coolantHeatCapacityJPerK;
  }

  /**
   * Advances the running engine by dt s: heat input heatInW (W), road speed (m/s), engine
   * speed (rpm), ambient (°C), A/C on or off. Returns the new coolant temperature, °C.
   */
  run(dtS: number, heatInW: number, speedMps: number, rpm: number, ambientC: number, acOn: boolean): number {
    const p = this.p;
    const T = this.coolantC;
    if (this.fanOn ? T <= p.fanOffC : T >= p.fanOnC) this.fanOn = !this.fanOn;
    const phi = this.thermostat.step(T, dtS);
    const loss = 1 - this.coolantLevel;
    // Low coolant (loss = lost share of the charge): the pump aerates (flow × (1 − 1.5·loss)),
    // upper radiator tubes run dry (wetted share 1 − 2.2·loss), the heater core starves first.
    const wet = loss > 0 ? Math.max(0.1, 1 - 2.2 * loss) : 1;
    const heaterFeed = loss > 0 ? Math.max(0, 1 - 3 * loss) : 1;
    const wCool = p.pumpCapacityRateWPerK * (rpm / p.ratedRpm) * phi * (loss > 0 ? Math.max(0.2, 1 - 1.5 * loss) : 1);
    const vAir = airSpeedMps(speedMps, this.fanOn ? V_FAN_MPS * this.fanFactor : 0);
    const gRad = radiatorConductanceWPerK(p, wCool, vAir, this.radiatorAirFactor * wet);
    const airInC = acOn ? ambientC + Math.min(CONDENSER_RISE_MAX_K, (CONDENSER_RISE_K * V_FAN_MPS) / vAir) : ambientC;
    const gBlock = p.blockLossWPerK * (1 + speedMps / V_BLOCK_REF_MPS);
    const gHeat = p.heaterMaxWPerK * heaterDemand(ambientC) * heaterFeed;
    const g = gBlock + gRad + gHeat;
    const sink = g > 0 ? ((gBlock + gHeat) * ambientC + gRad * airInC) / g : ambientC;
    return this.advance(dtS, heatInW, g, sink);
  }

  /** Advances the parked engine by dt s (natural convection to ambient only). */
  soak(dtS: number, ambientC: number): number {
    this.fanOn = false;
    this.thermostat.step(this.coolantC, dtS);
    return this.advance(dtS, 0, this.p.soakLossWPerK, ambientC);
  }

  private advance(dtS: number, heatInW: number, g: number, sinkC: number): number {
    const c = this.heatCapacityJPerK();
    const T = this.coolantC;
    const k = (g * dtS) / c;
    let next: number;
    if (k < 1e-12) next = T + (heatInW * dtS) / c;
    else {
      const tInf = sinkC + heatInW / g;
      next = tInf + (T - tInf) * Math.exp(-k);
    }
    if (next > this.p.boilC) next = this.p.boilC;
    this.lastConductanceWPerK = g;
    this.lastHeatOutW = heatInW - (c * (next - T)) / dtS;
    this.coolantC = next;
    return next;
  }
}
