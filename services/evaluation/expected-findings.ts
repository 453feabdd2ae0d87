/** Which finding kinds count as the right answer for each simulated fault kind (the evaluation's and the analysis tests' ground truth). */
export const EXPECTED_FINDINGS: Readonly<Record<string, readonly string[]>> = Object.freeze({
  'thermostat-stuck-open': ['slow-warmup'],
  'thermostat-sticking': ['overshoot'],
  'radiator-fouling': ['overheating-trend', 'boil-margin'],
  'fan-failure': ['overheating-trend', 'boil-margin'],
  'coolant-loss': ['overheating-trend', 'boil-margin', 'coolant-loss'],
  'sensor-stuck': ['sensor-fault'],
  'sensor-spikes': ['sensor-fault'],
  'sensor-dropouts': ['sensor-fault'],
  'sensor-bias': ['sensor-fault'],
});
