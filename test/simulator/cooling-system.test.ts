import { describe, expect, it } from 'vitest';
import {
  CoolingSystem,
  coolantBoilingPointC,
  thermalParamsFor,
  type ThermalParams,
} from '../../services/simulator/cooling-system.js';
import { VANTOR_L22 } from '../../services/simulator/engine-families.js';
import { ratedCoolantHeatW } from '../../services/simulator/load-model.js';
import { THERMOSTAT_HYSTERESIS_C, THERMOSTAT_SPAN_C, WaxThermostat } from '../../services/simulator/thermostat.js';

const base = thermalParamsFor(VANTOR_L22, ratedCoolantHeatW(VANTOR_L22));
/** No block losses, no heater, fan never on: only what the test switches on moves heat. */
const lossless: ThermalParams = {
  ...base,
  blockLossWPerK: 0,
  heaterMaxWPerK: 0,
  fanOnC: 1e9,
  fanOffC: 1e9 - 1,
  boilC: 1e9,
};

describe('lumped thermal model', () => {
  it('with the thermostat held shut and no losses, warms exactly as Q·t = C·ΔT', () => {
    // First law for a closed lumped body (Incropera, Fundamentals of Heat and Mass Transfer, ch. 5).
    const cs = new CoolingSystem(lossless, 10, { bleedFraction: 0 });
    cs.thermostat.heldOpening = 0;
    const heatW = 20_000;
    const seconds = 600;
    for (let t = 0; t < seconds; t++) cs.run(1, heatW, 0, 800, 10, false);
    const c = cs.heatCapacityJPerK();
    expect(cs.coolantC - 10).toBeCloseTo((heatW * seconds) / c, 9);
  });

  it('with constant heat input and a fixed opening follows the first-order Newton solution to its heat-balance steady state', () => {
    // T(t) = T∞ − (T∞ − T0)·e^(−t/τ), τ = C/G, T∞ = T_amb + Q/G: lumped capacitance with
    // Newton cooling (Incropera, Fundamentals of Heat and Mass Transfer, ch. 5, eq. 5.6 with a source).
    const cs = new CoolingSystem(lossless, 20, { bleedFraction: 0 });
    cs.thermostat.heldOpening = 0.5;
    const heatW = 30_000;
    const ambientC = 5;
    cs.run(1, heatW, 15, 2000, ambientC, false);
    const g = cs.lastConductanceWPerK;
    const c = cs.heatCapacityJPerK();
    const tau = c / g;
    const tInf = ambientC + heatW / g;
    let worst = 0;
    for (let t = 2; t <= 10 * tau; t++) {
      cs.run(1, heatW, 15, 2000, ambientC, false);
      const analytic = tInf - (tInf - 20) * Math.exp(-t / tau);
      worst = Math.max(worst, Math.abs(cs.coolantC - analytic));
    }
    expect(tau).toBeGreaterThan(10);
    expect(worst).toBeLessThan(1e-6);
    // Heat balance at steady state: what goes in leaves through the radiator.
    expect(cs.lastHeatOutW).toBeCloseTo(g * (cs.coolantC - ambientC), 0);
    expect(Math.abs(cs.lastHeatOutW - heatW) / heatW).toBeLessThan(1e-3);
  });

  it('never lets the coolant pass its boiling point under the cap', () => {
    const params = { ...lossless, boilC: coolantBoilingPointC(100, 50) };
    const cs = new CoolingSystem(params, 90, { bleedFraction: 0 });
    cs.thermostat.heldOpening = 0;
    for (let t = 0; t < 3600; t++) cs.run(1, 50_000, 0, 800, 30, false);
    expect(cs.coolantC).toBe(params.boilC);
  });

  it('puts the boiling point of water under a 100 kPa cap within 0.5 °C of IAPWS-IF97', () => {
    // IAPWS-IF97 region 4: 0.1 MPa → 372.755919 K; 201.325 kPa abs → about 120.4 °C (references.md).
    expect(coolantBoilingPointC(-1.325, 0)).toBeCloseTo(372.755919 - 273.15, 0);
    expect(Math.abs(coolantBoilingPointC(100, 0) - 120.4)).toBeLessThan(0.5);
  });
});

describe('wax thermostat', () => {
  it('starts to open at its rating, is fully open about 12 °C above it and closes a little lower (common practice)', () => {
    const th = new WaxThermostat({ openC: 88, waxTimeConstantS: 1e-3 }, 60);
    const openingAt = (c: number): number => {
      th.step(c, 1);
      return th.opening;
    };
    let up = 0;
    for (let c = 60; c <= 88; c += 0.1) up = openingAt(c);
    expect(up).toBeLessThan(0.01);
    for (let c = 88; c <= 88 + THERMOSTAT_SPAN_C + 0.05; c += 0.1) up = openingAt(c);
    expect(up).toBeCloseTo(1, 2);
    for (let c = 100; c >= 92; c -= 0.1) openingAt(c);
    // On the way down the valve lags by the hysteresis band.
    expect(th.opening).toBeCloseTo((92 + THERMOSTAT_HYSTERESIS_C - 88) / THERMOSTAT_SPAN_C, 1);
  });

  it('when sticking stays shut past its rating and then opens all at once', () => {
    const th = new WaxThermostat({ openC: 88, waxTimeConstantS: 1e-3 }, 60);
    th.lateOpeningC = 10;
    const trace: number[] = [];
    for (let c = 60; c <= 100; c += 0.5) {
      th.step(c, 1);
      trace.push(th.opening);
    }
    const firstOpen = trace.findIndex((x) => x > 0);
    expect(60 + firstOpen * 0.5).toBeGreaterThanOrEqual(98);
    expect(trace[firstOpen]).toBeGreaterThan(0.8);
  });
});
