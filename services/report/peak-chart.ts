import { degreeSign, type TemperatureUnit } from '../analysis/physics/temperature-unit.js';
import { type ChartOption, GRID, LEGEND, renderChartSvg, Y_NAME } from './chart-svg.js';
import type { PeakChart } from './weekly-report-schema.js';
import { utcWeekStartMs } from '../time/iso-week.js';
import { DAY_MS } from '../time/durations.js';

/** The projection is drawn at most this far past the last day, days (further: stated in words). */
export const PROJECTION_DRAWN_DAYS = 30;
const PEAK_COLOUR = '#d94801';
const AMBIENT_COLOUR = '#2171b5';
const TREND_COLOUR = '#a50f15';
const Y_STEP_C = 20;

const dayMs = (day: string) => Date.parse(`${day}T00:00:00Z`);
const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];
const dayLabel = (ms: number) => `${new Date(ms).getUTCDate()} ${MONTHS[new Date(ms).getUTCMonth()]}`;

/** The trend line's points: through the level on the anchor day with Sen's slope, back over the window and on to the projection. */
export function trendLine(chart: PeakChart): { fitted: [number, number][]; projected: [number, number][] } {
  const t = chart.trend;
  if (!t) return { fitted: [], projected: [] };
  const anchor = dayMs(t.anchorDay);
  const at = (ms: number): [number, number] => [
    ms,
    Math.round((t.levelC + (t.senSlopeCPerDay * (ms - anchor)) / DAY_MS) * 10) / 10,
  ];
  const fitted = [at(anchor - (t.windowDays - 1) * DAY_MS), at(anchor)];
  if (t.daysToBoil === null) return { fitted, projected: [] };
  const ahead = Math.min(t.daysToBoil, PROJECTION_DRAWN_DAYS);
  return { fitted, projected: [at(anchor), at(anchor + ahead * DAY_MS)] };
}

/**
 * Daily peak coolant temperature and daily maximum ambient, the Sen's-slope trend and its
 * projection towards the boiling point at cap pressure (drawn as a limit line).
 */
export function peakChartSvg(chart: PeakChart, vehicleId: string, unit: TemperatureUnit = 'C'): string {
  const deg = degreeSign(unit);
  const { fitted, projected } = trendLine(chart);
  const t = chart.trend;
  const trendName = t
    ? `trend ${t.senSlopeCPerDay >= 0 ? '+' : ''}${t.senSlopeCPerDay.toFixed(2)} ${deg}/day`
    : 'trend';
  const crossing =
    t?.daysToBoil !== null && t?.daysToBoil !== undefined && t.daysToBoil <= PROJECTION_DRAWN_DAYS
      ? projected[1]
      : undefined;
  const series = [
    {
      name: 'daily peak coolant',
      type: 'line' as const,
      color: PEAK_COLOUR,
      symbol: 'circle',
      symbolSize: 5,
      lineStyle: { width: 1.5 },
      data: chart.days.map((d) => [dayMs(d.day), d.peakCoolantC]),
      z: 3,
    },
    {
      name: 'daily max ambient',
      type: 'line' as const,
      color: AMBIENT_COLOUR,
      symbol: 'triangle',
      symbolSize: 4,
      lineStyle: { width: 1 },
      data: chart.days.filter((d) => d.ambientMaxC !== null).map((d) => [dayMs(d.day), d.ambientMaxC]),
      z: 2,
    },
    ...(fitted.length
      ? [
          {
            name: trendName,
            type: 'line' as const,
            color: TREND_COLOUR,
            showSymbol: false,
            lineStyle: { width: 2 },
            data: fitted,
            z: 4,
          },
        ]
      : []),
    ...(projected.length
      ? [
          {
            name: 'projection',
            type: 'line' as const,
            color: TREND_COLOUR,
            showSymbol: false,
            lineStyle: { width: 2, type: 'dashed' as const },
            data: projected,
            z: 4,
            ...(crossing
              ? {
                  markPoint: {
                    symbol: 'pin',
                    symbolSize: 34,
                    itemStyle: { color: TREND_COLOUR },
                    label: { fontSize: 9, formatter: 'boil' },
                    data: [{ coord: crossing, value: 'boil' }],
                  },
                }
              : {}),
          },
        ]
      : []),
    {
      name: 'limits',
      type: 'line' as const,
      data: [],
      silent: true,
      markLine: {
        symbol: 'none',
        silent: true,
        lineStyle: { color: '#555', type: 'dotted' as const },
        label: { position: 'insideStartTop' as const, fontSize: 10, color: '#333' },
        data: [
          {
            yAxis: chart.boilingPointC,
            label: { formatter: `boiling point at cap pressure ${chart.boilingPointC} ${deg}` },
            lineStyle: { color: TREND_COLOUR, type: 'solid' as const },
          },
          { yAxis: chart.hotThresholdC, label: { formatter: `overheat threshold ${chart.hotThresholdC} ${deg}` } },
        ],
      },
    },
  ];
  const lows = chart.days.flatMap((d) => (d.ambientMaxC === null ? [d.peakCoolantC] : [d.peakCoolantC, d.ambientMaxC]));
  const firstMs = chart.days.length ? dayMs(chart.days[0]!.day) : Date.now();
  const lastMs = Math.max(
    chart.days.length ? dayMs(chart.days[chart.days.length - 1]!.day) : firstMs,
    ...projected.map((q) => q[0]),
  );
  const option: ChartOption = {
    grid: GRID,
    legend: { ...LEGEND, data: series.filter((s) => s.name !== 'limits').map((s) => s.name) },
    // A value axis with ticks on Mondays: the time axis adds month-start ticks that crowd the labels.
    xAxis: {
      type: 'value',
      min: utcWeekStartMs(firstMs),
      max: lastMs + DAY_MS / 2,
      interval: 7 * DAY_MS,
      name: 'date (UTC days; ticks on Mondays)',
      nameLocation: 'middle',
      nameGap: 26,
      axisLabel: { formatter: (v: number) => dayLabel(v), showMaxLabel: false },
      splitLine: { show: true, lineStyle: { color: '#eee' } },
    },
    yAxis: {
      type: 'value',
      name: `temperature ${deg}`,
      ...Y_NAME,
      interval: Y_STEP_C,
      min: Math.floor((Math.min(...lows, 0) - 2) / Y_STEP_C) * Y_STEP_C,
      max: Math.ceil((chart.boilingPointC + 6) / Y_STEP_C) * Y_STEP_C,
    },
    series,
  };
  return renderChartSvg(
    option,
    `${vehicleId}: daily peak coolant temperature against ambient, with the trend towards the boiling point`,
  );
}
