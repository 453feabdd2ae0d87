import { CustomChart, LineChart, ScatterChart } from 'echarts/charts';
import { GridComponent, LegendComponent, MarkLineComponent, MarkPointComponent } from 'echarts/components';
import * as echarts from 'echarts/core';
import { SVGRenderer } from 'echarts/renderers';

// Apache ECharts renders SVG strings on the server without a DOM (its `ssr` mode); only the
// parts the report uses are registered, which keeps the first render quick.
echarts.use([
  LineChart,
  ScatterChart,
  CustomChart,
  GridComponent,
  LegendComponent,
  MarkLineComponent,
  MarkPointComponent,
  SVGRenderer,
]);

export type ChartOption = Parameters<echarts.ECharts['setOption']>[0];

/** Chart canvas, px: the SVG scales to its container through its viewBox. */
export const CHART_WIDTH_PX = 560;
export const CHART_HEIGHT_PX = 300;
/** System fonts only: the page must not fetch anything. */
export const CHART_FONT = 'system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif';

/**
 * Legend layout: the server measures text with its own font metrics, which run narrower than
 * the browser's fonts, so entries get generous gaps to keep them from overlapping.
 */
export const LEGEND = {
  top: 0,
  left: 0,
  right: 0,
  itemWidth: 18,
  itemHeight: 8,
  itemGap: 22,
  textStyle: { fontSize: 10 },
} as const;

/** Plot area: room above for a two-line legend, left for the rotated axis name. */
export const GRID = { left: 56, right: 18, top: 58, bottom: 44 } as const;
/** The y-axis name runs along the axis, clear of the legend. */
export const Y_NAME = { nameLocation: 'middle', nameRotate: 90, nameGap: 34 } as const;

/**
 * Renders one chart option to an inline SVG element (no animation, no namespace URLs: the
 * HTML parser puts inline `<svg>` in the SVG namespace by itself).
 */
export function renderChartSvg(
  option: ChartOption,
  ariaLabel: string,
  width = CHART_WIDTH_PX,
  height = CHART_HEIGHT_PX,
): string {
  const chart = echarts.init(null, null, { renderer: 'svg', ssr: true, width, height });
  try {
    chart.setOption({ animation: false, textStyle: { fontFamily: CHART_FONT }, ...option });
    const svg = chart.renderToSVGString();
    return svg
      .replace(/\s+xmlns(:xlink)?="[^"]*"/g, '')
      .replace('<svg ', `<svg class="chart" role="img" aria-label="${ariaLabel.replace(/[&"<>]/g, '')}" `);
  } finally {
    chart.dispose();
  }
}
