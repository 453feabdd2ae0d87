import { faultRamp, type FaultSpec } from './faults.js';
import type { Rng } from './prng.js';

/**
 * The coolant temperature channel as a gateway reports it (SAE J1939-71 SPN 110: 1 °C/bit,
 * offset −40 °C, valid −40..210 °C): true temperature + Gaussian noise, sensor faults, then
 * rounding to whole degrees and clamping to the valid range. NaN means "no value" (the ECU
 * flagged an error and the gateway dropped the sample).
 *
 * Sensor faults (s = severity 0..1), each from its onset:
 * - sensor-stuck: at each engine start, with probability 0.3 + 0.7·s, the reading freezes at
 *   its first value for the whole run (a flat line while the engine warms).
 * - sensor-spikes: each sample, with probability 0.005 + 0.03·s, a spike of ±25..80 °C (one in
 *   five goes to the channel limit).
 * - sensor-dropouts: an intermittent connection: bursts of 2–12 samples starting with
 *   probability 0.003 + 0.02·s per sample; in a burst a sample is missing (60 %) or reads the
 *   open-circuit value −40 °C (40 %).
 * - sensor-bias: an offset of ±(4 + 10·s) °C, growing to full size over 3 days.
 */

/** Noise of the sensor and its electronics, °C (1 sd) before quantisation. */
export const SENSOR_NOISE_SD_C = 0.25;
/** Valid range of SPN 110, °C. */
export const SPN110_MIN_C = -40;
export const SPN110_MAX_C = 210;
const BIAS_RAMP_MS = 3 * 86_400_000;

export class CoolantSensor {
  private readonly rng: Rng;
  private readonly stuck: FaultSpec | undefined;
  private readonly spikes: FaultSpec | undefined;
  private readonly dropouts: FaultSpec | undefined;
  private readonly bias: FaultSpec | undefined;
  private readonly biasSign: number;
  private stuckThisRun = false;
  private stuckValue = Number.NaN;
  private burstLeft = 0;

  private readonly resolutionC: number;

  /** `resolutionC`: the channel's step, °C (1 for SPN 110, 0.03125 for the high-resolution SPN 1637). */
  constructor(faults: readonly FaultSpec[], rng: Rng, resolutionC = 1) {
    this.rng = rng;
    this.resolutionC = resolutionC;
    this.stuck = faults.find((f) => f.kind === 'sensor-stuck');
    this.spikes = faults.find((f) => f.kind === 'sensor-spikes');
    this.dropouts = faults.find((f) => f.kind === 'sensor-dropouts');
    this.bias = faults.find((f) => f.kind === 'sensor-bias');
    // Drawn even when unused so that the stream does not depend on which faults exist.
    this.biasSign = rng.chance(0.65) ? -1 : 1;
  }

  /** Call at every engine start. */
  startRun(tMs: number): void {
    const s = this.stuck;
    this.stuckThisRun =
      s !== undefined && tMs >= s.onsetMs && this.rng.chance((0.3 + 0.7 * s.severity) * faultRamp(s, tMs));
    this.stuckValue = Number.NaN;
  }

  /** The reported value for true coolant temperature trueC (°C) at epoch ms tMs; NaN = absent. */
  read(trueC: number, tMs: number): number {
    const rng = this.rng;
    let v = trueC + SENSOR_NOISE_SD_C * rng.normal();
    const b = this.bias;
    if (b !== undefined && tMs >= b.onsetMs) {
      v +=
        this.biasSign *
        (4 + 10 * b.severity) *
        Math.min(1, (tMs - b.onsetMs) / Math.max(BIAS_RAMP_MS, (b.rampDays ?? 0) * 86_400_000));
    }
    const sp = this.spikes;
    if (sp !== undefined && tMs >= sp.onsetMs && rng.chance((0.005 + 0.03 * sp.severity) * faultRamp(sp, tMs))) {
      const up = rng.chance(0.5);
      v = rng.chance(0.2) ? (up ? SPN110_MAX_C : SPN110_MIN_C) : v + (up ? 1 : -1) * rng.uniform(25, 80);
    }
    if (this.stuckThisRun) {
      if (Number.isNaN(this.stuckValue)) this.stuckValue = v;
      v = this.stuckValue;
    }
    const d = this.dropouts;
    if (d !== undefined && tMs >= d.onsetMs) {
      if (this.burstLeft === 0 && rng.chance((0.003 + 0.02 * d.severity) * faultRamp(d, tMs)))
        this.burstLeft = rng.int(2, 12);
      if (this.burstLeft > 0) {
        this.burstLeft--;
        if (rng.chance(0.6)) return Number.NaN;
        v = SPN110_MIN_C;
      }
    }
    v = this.resolutionC === 1 ? Math.round(v) : Math.round(v / this.resolutionC) * this.resolutionC;
    return v < SPN110_MIN_C ? SPN110_MIN_C : v > SPN110_MAX_C ? SPN110_MAX_C : v;
  }
}
