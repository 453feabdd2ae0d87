/**
 * Wax-pellet thermostat.
 *
 * Equations (t in s, temperatures in °C, opening x dimensionless 0..1):
 * - wax element lag:  dT_wax/dt = (T_coolant − T_wax) / τ_wax            (first order, τ_wax in s)
 * - hysteresis:       a play (backlash) band of width H °C between T_wax and the valve
 *                     position, so the valve closes H °C lower than it opened
 * - opening:          x_mech = clamp((T_play − T_open) / span, 0, 1)   (span ≈ 12 °C: fully open
 *                     about 12 °C above the rating, common practice)
 * - flow fraction to the radiator:  φ = φ_bleed + (1 − φ_bleed) · x   (φ_bleed: jiggle pin /
 *                     bypass leakage, so a closed thermostat still passes a little flow)
 * Faults: stuck open keeps x ≥ x_stuck; sticking keeps the valve shut until the wax is
 * `lateC` above the rating, then it jumps to x_mech at once (overshoot); it sticks again once
 * the wax has cooled STICK_AGAIN_BELOW_RATING_C under the rating (after a soak), so every cold
 * start, and warm restarts after long enough stops, overshoot.
 */

/** Temperature rise above the rating at which the valve is fully open, °C (common practice). */
export const THERMOSTAT_SPAN_C = 12;
/** Opening/closing hysteresis, °C. */
export const THERMOSTAT_HYSTERESIS_C = 2;
/**
 * Wax element time constant, s. Real elements take some tens of seconds to travel fully, but
 * in a one-node model a long lag makes the loop hunt by ±8 °C (loop gain × lag > 1); 8 s keeps
 * the regulated temperature within a few °C, as real engines show.
 */
export const WAX_TIME_CONSTANT_S = 8;
/** Flow fraction through a closed thermostat (bleed hole / bypass leakage), dimensionless. */
export const THERMOSTAT_BLEED_FRACTION = 0.02;
/** A sticking valve seizes again when the wax cools this far below the rating, °C. */
export const STICK_AGAIN_BELOW_RATING_C = 15;

export interface ThermostatSettings {
  /** Rated start-to-open temperature, °C. */
  openC: number;
  spanC?: number;
  hysteresisC?: number;
  waxTimeConstantS?: number;
  bleedFraction?: number;
}

export class WaxThermostat {
  readonly openC: number;
  readonly spanC: number;
  readonly halfBandC: number;
  readonly waxTauS: number;
  readonly bleed: number;
  /** Wax element temperature, °C. */
  waxC: number;
  /** Position of the play band's centre, °C. */
  private playC: number;
  /** Valve opening, 0..1. */
  opening = 0;
  /** Fault: the valve never closes below this opening (0 = healthy). */
  stuckOpenFraction = 0;
  /** Fault: the valve stays shut until the wax is this far above the rating, °C (0 = healthy). */
  lateOpeningC = 0;
  private stuckShut = true;
  /** Test hook and bench use: hold the valve at a fixed opening (NaN = normal operation). */
  heldOpening = Number.NaN;
  private alphaDt = Number.NaN;
  private alpha = 0;

  constructor(s: ThermostatSettings, initialC: number) {
    this.openC = s.openC;
    this.spanC = s.spanC ?? THERMOSTAT_SPAN_C;
    this.halfBandC = (s.hysteresisC ?? THERMOSTAT_HYSTERESIS_C) / 2;
    this.waxTauS = s.waxTimeConstantS ?? WAX_TIME_CONSTANT_S;
    this.bleed = s.bleedFraction ?? THERMOSTAT_BLEED_FRACTION;
    this.waxC = initialC;
    this.playC = initialC + this.halfBandC;
  }

  /** Advances the wax and valve by dt seconds at coolant temperature coolantC; returns φ. */
  step(coolantC: number, dtS: number): number {
    if (dtS !== this.alphaDt) {
      this.alphaDt = dtS;
      this.alpha = 1 - Math.exp(-dtS / this.waxTauS);
    }
    this.waxC += (coolantC - this.waxC) * this.alpha;
    const w = this.waxC;
    if (w > this.playC + this.halfBandC) this.playC = w - this.halfBandC;
    else if (w < this.playC - this.halfBandC) this.playC = w + this.halfBandC;
    // Rising branch opens at openC; the falling branch closes 2·halfBand lower.
    let x = (this.playC + this.halfBandC - this.openC) / this.spanC;
    x = x < 0 ? 0 : x > 1 ? 1 : x;
    if (this.lateOpeningC > 0) {
      if (this.stuckShut) {
        if (w >= this.openC + this.lateOpeningC) this.stuckShut = false;
        else x = 0;
      } else if (w < this.openC - STICK_AGAIN_BELOW_RATING_C) {
        this.stuckShut = true;
      }
    }
    if (x < this.stuckOpenFraction) x = this.stuckOpenFraction;
    if (this.heldOpening === this.heldOpening) x = this.heldOpening; // not NaN
    this.opening = x;
    return this.bleed + (1 - this.bleed) * x;
  }
}
