import { degreeSign, type TemperatureUnit } from '../analysis/physics/temperature-unit.js';
import { type ChartOption, GRID, LEGEND, renderChartSvg, Y_NAME } from './chart-svg.js';
import { WARMUP_CHART_MIN } from './warmup-chart-data.js';
import type { WarmupChart } from './weekly-report-schema.js';

/** Colours of the recent curves, oldest to newest (newest darkest); the band is green, limits grey. */
const CURVE_COLOURS = ['#9ecae1', '#6baed6', '#3182bd', '#08519c'];
const BAND_FILL = 'rgba(65, 171, 93, 0.25)';
const BAND_LINE = '#238b45';
const Y_STEP_C = 20;

/** Readings further apart than this are not joined by a line (the engine stopped or the link dropped), min. */
const CURVE_BREAK_MIN = 2;

/** The curve's points with a break ('-', which ECharts leaves unjoined) across each long gap. */
function withBreaks(points: ReadonlyArray<readonly [number, number]>): (readonly [number, number] | '-')[] {
  const out: (readonly [number, number] | '-')[] = [];
  points.forEach((p, i) => {
    if (i > 0 && p[0] - points[i - 1]![0] > CURVE_BREAK_MIN) out.push('-');
    out.push(p);
  });
  return out;
}

/** A cold start's legend entry: local day and time in the fleet's zone, and the ambient at start. */
export function curveName(curve: WarmupChart['curves'][number], timeZone: string, unit: TemperatureUnit = 'C'): string {
  const local = new Intl.DateTimeFormat('en-GB', {
    timeZone,
    weekday: 'short',
    day: 'numeric',
    month: 'short',
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
  })
    .format(new Date(curve.runStart))
    .replace(',', '');
  return curve.startAmbientC === null ? local : `${local} (${Math.round(curve.startAmbientC)} ${degreeSign(unit)})`;
}

/**
 * The warm-up chart: the recent cold starts' coolant temperature against minutes since start,
 * over the vehicle's healthy band, with the warm-up target and the thermostat rating.
 */
export function warmupChartSvg(
  chart: WarmupChart,
  timeZone: string,
  vehicleId: string,
  unit: TemperatureUnit = 'C',
): string {
  const deg = degreeSign(unit);
  const curveSeries = chart.curves.map((c, i) => ({
    name: curveName(c, timeZone, unit),
    type: 'line' as const,
    showSymbol: false,
    data: withBreaks(c.points),
    lineStyle: { width: 2, ...(c.source === 'newton-fit' ? { type: 'dashed' as const } : {}) },
    color: CURVE_COLOURS[Math.max(0, CURVE_COLOURS.length - chart.curves.length + i)]!,
    z: 3,
  }));
  const polygon = [
    ...chart.band.map((b) => [b.minute, b.lowC]),
    ...chart.band
      .slice()
      .reverse()
      .map((b) => [b.minute, b.highC]),
  ];
  const bandSeries =
    chart.band.length === 0
      ? []
      : [
          {
            name: 'healthy range',
            type: 'custom' as const,
            color: BAND_FILL,
            data: [0],
            renderItem: (_params: unknown, api: { coord: (p: number[]) => number[] }) => ({
              type: 'polygon',
              shape: { points: polygon.map((p) => api.coord(p)) },
              style: { fill: BAND_FILL, stroke: 'none' },
            }),
            z: 1,
          },
          {
            name: 'healthy median',
            type: 'line' as const,
            showSymbol: false,
            color: BAND_LINE,
            lineStyle: { type: 'dashed' as const, width: 1.5 },
            data: chart.band.map((b) => [b.minute, b.medianC]),
            z: 2,
          },
        ];
  const limits = {
    name: 'limits',
    type: 'line' as const,
    data: [],
    silent: true,
    markLine: {
      symbol: 'none',
      silent: true,
      lineStyle: { color: '#555', type: 'dotted' as const },
      label: { position: 'insideEndTop' as const, fontSize: 10, color: '#333' },
      data: [
        {
          yAxis: chart.warmupTargetC,
          name: 'target',
          label: { formatter: `warm-up target ${chart.warmupTargetC} ${deg}` },
        },
        {
          yAxis: chart.thermostatOpenC,
          name: 'thermostat',
          label: { formatter: `thermostat opens ${chart.thermostatOpenC} ${deg}`, position: 'insideStartTop' as const },
        },
      ],
    },
  };
  const lows = [...chart.curves.flatMap((c) => c.points.map((p) => p[1])), ...chart.band.map((b) => b.lowC)];
  const option: ChartOption = {
    grid: GRID,
    legend: { ...LEGEND, data: [...bandSeries, ...curveSeries].map((x) => x.name) },
    xAxis: {
      type: 'value',
      min: 0,
      max: WARMUP_CHART_MIN,
      interval: 5,
      name: 'minutes since engine start',
      nameLocation: 'middle',
      nameGap: 26,
    },
    yAxis: {
      type: 'value',
      name: `coolant ${deg}`,
      ...Y_NAME,
      interval: Y_STEP_C,
      min: Math.floor((Math.min(...lows, chart.warmupTargetC) - 2) / Y_STEP_C) * Y_STEP_C,
      max: Math.ceil((chart.thermostatOpenC + 12) / Y_STEP_C) * Y_STEP_C,
    },
    series: [...bandSeries, ...curveSeries, limits],
  };
  return renderChartSvg(option, `${vehicleId}: recent cold-start warm-ups against the healthy range`);
}
