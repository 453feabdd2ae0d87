import { api, query } from './api.js';
import { h } from './dom.js';
import { degree, unitParam } from './units.js';

/** Okabe–Ito colours (distinguishable with the common colour-vision deficiencies); lines also differ by dash and marker. */
export const PALETTE = {
  blue: '#0072B2',
  sky: '#56B4E9',
  green: '#009E73',
  orange: '#E69F00',
  vermillion: '#D55E00',
  purple: '#CC79A7',
  yellow: '#F0E442',
  grey: '#5f6b76',
};
const CURVE_STYLES = [
  { color: PALETTE.vermillion, type: 'solid', symbol: 'circle' },
  { color: PALETTE.blue, type: 'dashed', symbol: 'rect' },
  { color: PALETTE.purple, type: 'dotted', symbol: 'triangle' },
  { color: PALETTE.green, type: 'dashed', symbol: 'diamond' },
];
const DAY_MS = 86_400_000;
/** Points one readings request asks for: a few thousand at most, whatever the range. */
export const READINGS_POINTS = 800;
/** A zoom narrower than this share of the loaded range fetches finer data for the visible part. */
const REFINE_SHARE = 0.7;

const base = () => ({
  aria: { enabled: true, decal: { show: false } },
  animation: false,
  textStyle: { fontFamily: 'inherit' },
  grid: { left: 56, right: 24, top: 48, bottom: 64 },
  legend: { top: 0, type: 'scroll' },
  tooltip: { trigger: 'axis', confine: true },
});

/** A temperature as the page shows it, in the planner's unit (the service already converted the number). */
const fmt = (v) => (v === null || v === undefined || Number.isNaN(v) ? '—' : `${Math.round(v * 10) / 10} ${degree()}`);

let charting = null;

/**
 * Loads echarts (vendor/echarts.min.js, 1.1 MB, about 370 kB gzipped) once, on the first page
 * that draws a chart, so the fleet page never waits for it and the vehicle page fetches it
 * while its data is on the way.
 */
export function loadCharting() {
  charting ??= new Promise((resolve, reject) => {
    const script = document.createElement('script');
    script.src = '/app/assets/vendor/echarts.min.js';
    script.onload = () => resolve(window.echarts);
    script.onerror = () => {
      charting = null;
      reject(new Error('the charting library did not load'));
    };
    document.head.append(script);
  });
  return charting;
}

function mount(el) {
  // Callers await loadCharting() first.
  const chart = window.echarts.init(el, null, { renderer: 'canvas' });
  new ResizeObserver(() => chart.resize()).observe(el);
  return chart;
}

/** Cold starts of the last weeks against the band of the vehicle's healthy cold starts. */
export function warmupChart(el, w) {
  const chart = mount(el);
  const band = w.band;
  const series = [];
  if (band.length > 0) {
    series.push(
      {
        name: 'healthy band low',
        type: 'line',
        stack: 'band',
        symbol: 'none',
        lineStyle: { opacity: 0 },
        data: band.map((b) => [b.minute, b.lowC]),
        tooltip: { show: false },
        legendHoverLink: false,
      },
      {
        name: `healthy band (10–90 %, ${w.baselineRuns} cold starts)`,
        type: 'line',
        stack: 'band',
        symbol: 'none',
        lineStyle: { opacity: 0 },
        areaStyle: { color: 'rgba(86,180,233,0.35)' },
        data: band.map((b) => [b.minute, b.highC - b.lowC]),
      },
      {
        name: 'healthy median',
        type: 'line',
        symbol: 'none',
        lineStyle: { color: PALETTE.grey, type: 'dashed' },
        itemStyle: { color: PALETTE.grey },
        data: band.map((b) => [b.minute, b.medianC]),
      },
    );
  }
  w.curves.forEach((c, i) => {
    const s = CURVE_STYLES[i % CURVE_STYLES.length];
    series.push({
      name: `cold start ${c.runStart.slice(0, 16).replace('T', ' ')}${c.startAmbientC !== null ? ` (ambient ${fmt(c.startAmbientC)})` : ''}`,
      type: 'line',
      showSymbol: false,
      symbol: s.symbol,
      lineStyle: { color: s.color, type: s.type, width: 2 },
      itemStyle: { color: s.color },
      data: c.points,
    });
  });
  series.push({
    name: 'limits',
    type: 'line',
    data: [],
    tooltip: { show: false },
    markLine: {
      symbol: 'none',
      silent: true,
      data: [
        {
          yAxis: w.warmupTargetC,
          name: 'warm-up target',
          lineStyle: { color: PALETTE.orange, type: 'dotted' },
          label: { formatter: `warm-up target ${fmt(w.warmupTargetC)}`, position: 'insideEndTop' },
        },
        {
          yAxis: w.thermostatOpenC,
          name: 'thermostat rating',
          lineStyle: { color: PALETTE.grey, type: 'dotted' },
          label: { formatter: `thermostat ${fmt(w.thermostatOpenC)}`, position: 'insideStartTop' },
        },
      ],
    },
  });
  chart.setOption({
    ...base(),
    legend: {
      top: 0,
      type: 'scroll',
      data: series.map((s) => s.name).filter((n) => n !== 'healthy band low' && n !== 'limits'),
    },
    xAxis: { type: 'value', name: 'minutes after engine start', nameLocation: 'middle', nameGap: 28, min: 0, max: 40 },
    yAxis: { type: 'value', name: `coolant ${degree()}`, scale: true },
    tooltip: { trigger: 'axis', confine: true, valueFormatter: (v) => fmt(v) },
    dataZoom: [{ type: 'inside', xAxisIndex: 0 }],
    series,
  });
  return chart;
}

/** Daily peak coolant and maximum ambient with the trend of the peaks and the boiling point at cap pressure. */
export function peaksChart(el, p) {
  const chart = mount(el);
  const days = p.days.map((d) => Date.parse(`${d.day}T12:00:00Z`));
  const series = [
    {
      name: 'daily peak coolant',
      type: 'line',
      symbol: 'circle',
      symbolSize: 6,
      lineStyle: { color: PALETTE.blue, width: 2 },
      itemStyle: { color: PALETTE.blue },
      data: p.days.map((d, i) => [days[i], d.peakCoolantC]),
    },
    {
      name: 'daily max ambient',
      type: 'line',
      symbol: 'triangle',
      symbolSize: 6,
      lineStyle: { color: PALETTE.green, type: 'dashed' },
      itemStyle: { color: PALETTE.green },
      data: p.days.map((d, i) => [days[i], d.ambientMaxC]),
    },
  ];
  const t = p.trend;
  if (t) {
    const anchor = Date.parse(`${t.anchorDay}T12:00:00Z`);
    const startX = anchor - t.windowDays * DAY_MS;
    const ahead = t.daysToBoil !== null && t.daysToBoil <= 60 ? t.daysToBoil : 14;
    series.push({
      name: `trend ${t.senSlopeCPerDay >= 0 ? '+' : ''}${t.senSlopeCPerDay} ${degree()}/day${t.daysToBoil !== null ? `, boiling in about ${Math.round(t.daysToBoil)} days` : ''}`,
      type: 'line',
      symbol: 'none',
      lineStyle: { color: PALETTE.purple, type: 'dashed', width: 2 },
      itemStyle: { color: PALETTE.purple },
      data: [
        [startX, t.levelC - t.senSlopeCPerDay * t.windowDays],
        [anchor, t.levelC],
        [anchor + ahead * DAY_MS, t.levelC + t.senSlopeCPerDay * ahead],
      ],
    });
  }
  series.push({
    name: `boiling point at cap pressure ${fmt(p.boilingPointC)}`,
    type: 'line',
    data: [],
    itemStyle: { color: PALETTE.vermillion },
    lineStyle: { color: PALETTE.vermillion },
    markLine: {
      symbol: 'none',
      silent: true,
      data: [
        {
          yAxis: p.boilingPointC,
          lineStyle: { color: PALETTE.vermillion, width: 2 },
          label: { formatter: `boiling ${fmt(p.boilingPointC)}`, position: 'insideEndTop' },
        },
        {
          yAxis: p.hotThresholdC,
          lineStyle: { color: PALETTE.orange, type: 'dotted' },
          label: { formatter: `hot threshold ${fmt(p.hotThresholdC)}`, position: 'insideStartTop' },
        },
      ],
    },
  });
  chart.setOption({
    ...base(),
    xAxis: { type: 'time' },
    yAxis: { type: 'value', name: degree(), scale: true, max: (v) => Math.max(v.max, p.boilingPointC) + 3 },
    tooltip: { trigger: 'axis', confine: true, valueFormatter: (v) => fmt(v) },
    dataZoom: [
      { type: 'inside', xAxisIndex: 0, filterMode: 'none' },
      { type: 'slider', xAxisIndex: 0, height: 20, bottom: 8, filterMode: 'none' },
    ],
    series,
  });
  return chart;
}

/** Points of one readings reply as chart rows; a gap longer than three buckets breaks the lines. */
function rows(reply) {
  const out = [];
  let last = null;
  for (const p of reply.points) {
    const t = Date.parse(p.t);
    if (last !== null && t - last > 3 * reply.bucketMs) out.push({ t: last + reply.bucketMs, gap: true });
    out.push({ t, min: p.coolantMinC, max: p.coolantMaxC, mean: p.coolantMeanC, ambient: p.ambientC, n: p.n });
    last = t;
  }
  return out;
}

/** One downsampled readings request of [from, to) (epoch ms; undefined: the service's default window). */
export function readingsRequest(vehicleId, from, to) {
  return api(
    `/v1/vehicles/${encodeURIComponent(vehicleId)}/readings${query({ from: from === undefined ? undefined : new Date(from).toISOString(), to: to === undefined ? undefined : new Date(to).toISOString(), maxPoints: READINGS_POINTS, unit: unitParam() })}`,
  );
}

/**
 * Readings of any range, downsampled by the service (each point a bucket's min, max and mean).
 * Wheel, drag or the slider zoom the time axis; a zoom fetches finer data for what is visible.
 */
export function readingsChart(el, vehicleId, status) {
  const chart = mount(el);
  let coarse = [];
  let loaded = { from: 0, to: 0 };
  let fine = null;
  let pending = 0;
  let timer = null;
  let requests = 0;

  function draw(keepZoom) {
    const data = fine
      ? [...coarse.filter((r) => r.t < fine.from), ...fine.rows, ...coarse.filter((r) => r.t >= fine.to)]
      : coarse;
    const v = (r, k) => [r.t, r.gap ? null : r[k]];
    chart.setOption({
      series: [
        { id: 'min', data: data.map((r) => v(r, 'min')) },
        { id: 'range', data: data.map((r) => [r.t, r.gap ? null : r.max - r.min]) },
        { id: 'mean', data: data.map((r) => v(r, 'mean')) },
        { id: 'ambient', data: data.map((r) => v(r, 'ambient')) },
      ],
      ...(keepZoom
        ? {}
        : {
            xAxis: { min: loaded.from, max: loaded.to },
            dataZoom: [
              { start: 0, end: 100 },
              { start: 0, end: 100 },
            ],
          }),
    });
    el.dataset.points = String(data.length);
  }

  function fetchRange(from, to) {
    requests++;
    el.dataset.requests = String(requests);
    return readingsRequest(vehicleId, from, to);
  }

  function say(text) {
    status.textContent = text;
  }

  chart.setOption({
    ...base(),
    xAxis: { type: 'time' },
    yAxis: { type: 'value', name: degree(), scale: true },
    tooltip: {
      trigger: 'axis',
      confine: true,
      formatter: (items) => {
        const t = items[0]?.value?.[0];
        const get = (id) => items.find((i) => i.seriesId === id)?.value?.[1];
        const min = get('min');
        const range = get('range');
        const lines = [
          new Date(t).toISOString().slice(0, 16).replace('T', ' ') + ' UTC',
          `coolant min ${fmt(min)}, max ${fmt(min !== undefined && range !== undefined && min !== null && range !== null ? min + range : null)}`,
          `coolant mean ${fmt(get('mean'))}`,
          `ambient ${fmt(get('ambient'))}`,
        ];
        return lines.map((l) => `<div>${l.replace(/[<>&]/g, '')}</div>`).join('');
      },
    },
    dataZoom: [
      { type: 'inside', xAxisIndex: 0, filterMode: 'none' },
      { type: 'slider', xAxisIndex: 0, height: 20, bottom: 8, filterMode: 'none' },
    ],
    legend: { top: 0, data: ['coolant min–max', 'coolant mean', 'ambient'] },
    series: [
      {
        id: 'min',
        name: 'coolant min',
        type: 'line',
        stack: 'band',
        symbol: 'none',
        lineStyle: { opacity: 0 },
        data: [],
        connectNulls: false,
      },
      {
        id: 'range',
        name: 'coolant min–max',
        type: 'line',
        stack: 'band',
        symbol: 'none',
        lineStyle: { opacity: 0 },
        areaStyle: { color: 'rgba(0,114,178,0.28)' },
        itemStyle: { color: 'rgba(0,114,178,0.5)' },
        data: [],
        connectNulls: false,
      },
      {
        id: 'mean',
        name: 'coolant mean',
        type: 'line',
        symbol: 'none',
        lineStyle: { color: PALETTE.blue, width: 1.5 },
        itemStyle: { color: PALETTE.blue },
        data: [],
        connectNulls: false,
      },
      {
        id: 'ambient',
        name: 'ambient',
        type: 'line',
        symbol: 'none',
        lineStyle: { color: PALETTE.green, type: 'dashed', width: 1.5 },
        itemStyle: { color: PALETTE.green },
        data: [],
        connectNulls: false,
      },
    ],
  });

  /** Loads [from, to) (default: the service's, the last 7 days of data), or shows `started`, a request already made. */
  async function load(from, to, started) {
    say('Loading readings…');
    const reply = await (started ?? fetchRange(from, to));
    coarse = rows(reply);
    loaded = { from: Date.parse(reply.from), to: Date.parse(reply.to) };
    fine = null;
    draw(false);
    say(
      `${reply.points.length} points, one per ${Math.round(reply.bucketMs / 60_000)} min, ${reply.from.slice(0, 10)} to ${reply.to.slice(0, 10)}`,
    );
    return reply;
  }

  // A zoom settles for 250 ms before finer data is fetched; an older reply never overwrites a newer one.
  chart.on('datazoom', () => {
    clearTimeout(timer);
    timer = setTimeout(async () => {
      const zoom = chart.getOption().dataZoom[0];
      const span = loaded.to - loaded.from;
      const from = zoom.startValue ?? loaded.from + (span * zoom.start) / 100;
      const to = zoom.endValue ?? loaded.from + (span * zoom.end) / 100;
      if (to - from > span * REFINE_SHARE) {
        if (fine) {
          fine = null;
          draw(true);
        }
        return;
      }
      const mine = ++pending;
      say('Loading finer readings…');
      const reply = await fetchRange(Math.floor(from), Math.ceil(to));
      if (mine !== pending) return;
      fine = { from: Math.floor(from), to: Math.ceil(to), rows: rows(reply) };
      draw(true);
      say(
        `zoomed: ${reply.points.length} points, one per ${reply.bucketMs >= 60_000 ? `${Math.round(reply.bucketMs / 60_000)} min` : `${Math.round(reply.bucketMs / 1000)} s`}, ${reply.from.slice(0, 16).replace('T', ' ')} to ${reply.to.slice(0, 16).replace('T', ' ')} UTC`,
      );
    }, 250);
  });

  return {
    chart,
    load,
    zoom(factor) {
      const zoom = chart.getOption().dataZoom[0];
      const mid = (zoom.start + zoom.end) / 2;
      const half = Math.min(50, Math.max(0.5, ((zoom.end - zoom.start) * factor) / 2));
      chart.dispatchAction({ type: 'dataZoom', start: Math.max(0, mid - half), end: Math.min(100, mid + half) });
    },
  };
}

/** The chart's container with its caption and an accessible name. */
export function figure(id, title, caption) {
  const el = h('div', { class: 'chart', id, role: 'img', 'aria-label': `${title}. ${caption}` });
  return {
    el,
    node: h('figure', { class: 'chart-figure' }, h('figcaption', {}, h('strong', {}, title), ' ', caption), el),
  };
}
