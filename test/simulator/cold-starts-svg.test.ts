import { mkdir, writeFile } from 'node:fs/promises';
import { describe, expect, it } from 'vitest';
import { FAULT_KINDS, type Climate, type Duty, type FaultKind } from '../../services/simulator/index.js';
import { Rng } from '../../services/simulator/prng.js';
import { buildVehicle } from '../../services/simulator/sim-vehicle.js';
import { coldStarts, collect, window } from './sample-series.js';
import { renderPanels, type PlotPanel } from './svg-plot.js';

/**
 * Draws the last three cold starts (90 min from engine start, reported coolant) of a healthy
 * vehicle and of one vehicle per fault kind, to test-output/simulator-cold-starts.svg, for a
 * person to check by eye that they look like coolant telemetry.
 */
const START_MS = Date.UTC(2026, 9, 5);
const DAYS = 35;
const ONSET_MS = START_MS + 10 * 86_400_000;
const WHERE: Record<FaultKind | 'healthy', [Climate, Duty]> = {
  healthy: ['temperate', 'urban-delivery'],
  'thermostat-stuck-open': ['cold', 'long-haul'],
  'thermostat-sticking': ['temperate', 'service-van'],
  'radiator-fouling': ['hot', 'long-haul'],
  'fan-failure': ['hot', 'bus'],
  'coolant-loss': ['hot', 'long-haul'],
  'sensor-stuck': ['temperate', 'urban-delivery'],
  'sensor-spikes': ['temperate', 'urban-delivery'],
  'sensor-dropouts': ['temperate', 'urban-delivery'],
  'sensor-bias': ['cold', 'service-van'],
};
const COLORS = ['#1f77b4', '#ff7f0e', '#2ca02c'];

describe('cold-start plot', () => {
  it('draws three cold starts for a healthy vehicle and for every fault kind', async () => {
    const panels: PlotPanel[] = [];
    for (const kind of ['healthy', ...FAULT_KINDS] as const) {
      const [climate, duty] = WHERE[kind];
      const faults = kind === 'healthy' ? [] : [{ kind, onsetMs: ONSET_MS, severity: 0.9 }];
      const v = buildVehicle('P-1', 'plot', { name: climate, climate, utcOffsetHours: 0 }, duty, new Rng(5), faults);
      const s = collect(v, { startMs: START_MS, days: DAYS, seed: 2 });
      const starts = coldStarts(s, ONSET_MS + 7 * 86_400_000).slice(-3);
      expect(starts).toHaveLength(3);
      panels.push({
        title: `${kind}: ${v.engineFamily}, ${duty}, ${climate}`,
        hlines: [
          { y: v.thermostatOpenC, label: `rating ${v.thermostatOpenC} °C` },
          { y: v.thermostatOpenC - 11, label: 'rating − 11 °C' },
        ],
        series: starts.map((i, k) => ({ ...window(s, i, 90), color: COLORS[k] as string })),
      });
    }
    const svg = renderPanels(panels, {
      columns: 2,
      xLabel: 'minutes since engine start',
      yLabel: 'coolant °C',
      xMax: 90,
      yMin: -40,
      yMax: 140,
    });
    await mkdir('test-output', { recursive: true });
    await writeFile('test-output/simulator-cold-starts.svg', svg);
    expect(svg.match(/<path /g)).toHaveLength(30);
  });
});
