/**
 * A small hand-made SVG line plot for eyeballing simulator output in test-output/.
 * Panels in a grid; each panel has series (x, y with NaN = gap) and horizontal reference lines.
 */

export interface PlotSeries {
  x: number[];
  y: number[];
  color: string;
}
export interface PlotPanel {
  title: string;
  series: PlotSeries[];
  /** Horizontal reference lines (e.g. the thermostat rating). */
  hlines: { y: number; label: string }[];
}

const PANEL_W = 560;
const PANEL_H = 230;
const MARGIN = { left: 48, right: 12, top: 26, bottom: 30 };

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** Renders panels in `columns` columns with shared axis ranges; returns the SVG text. */
export function renderPanels(
  panels: PlotPanel[],
  opts: { columns: number; xLabel: string; yLabel: string; xMax: number; yMin: number; yMax: number },
): string {
  const rows = Math.ceil(panels.length / opts.columns);
  const width = opts.columns * PANEL_W;
  const height = rows * PANEL_H;
  const out: string[] = [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="sans-serif" font-size="11">`,
    `<rect width="${width}" height="${height}" fill="white"/>`,
  ];
  panels.forEach((p, i) => {
    const ox = (i % opts.columns) * PANEL_W;
    const oy = Math.floor(i / opts.columns) * PANEL_H;
    const w = PANEL_W - MARGIN.left - MARGIN.right;
    const h = PANEL_H - MARGIN.top - MARGIN.bottom;
    const sx = (x: number): number => ox + MARGIN.left + (Math.min(x, opts.xMax) / opts.xMax) * w;
    const sy = (y: number): number =>
      oy + MARGIN.top + (1 - (Math.min(Math.max(y, opts.yMin), opts.yMax) - opts.yMin) / (opts.yMax - opts.yMin)) * h;
    out.push(`<text x="${ox + MARGIN.left}" y="${oy + 16}" font-size="13" font-weight="bold">${esc(p.title)}</text>`);
    out.push(
      `<rect x="${ox + MARGIN.left}" y="${oy + MARGIN.top}" width="${w}" height="${h}" fill="none" stroke="#999"/>`,
    );
    for (let yt = Math.ceil(opts.yMin / 20) * 20; yt <= opts.yMax; yt += 20) {
      out.push(
        `<line x1="${ox + MARGIN.left}" x2="${ox + MARGIN.left + w}" y1="${sy(yt)}" y2="${sy(yt)}" stroke="#eee"/>`,
      );
      out.push(`<text x="${ox + MARGIN.left - 4}" y="${sy(yt) + 4}" text-anchor="end">${yt}</text>`);
    }
    const xStep = opts.xMax <= 60 ? 10 : 30;
    for (let xt = 0; xt <= opts.xMax; xt += xStep)
      out.push(`<text x="${sx(xt)}" y="${oy + MARGIN.top + h + 14}" text-anchor="middle">${xt}</text>`);
    out.push(
      `<text x="${ox + MARGIN.left + w / 2}" y="${oy + PANEL_H - 3}" text-anchor="middle" fill="#555">${esc(opts.xLabel)}</text>`,
    );
    out.push(
      `<text x="${ox + 12}" y="${oy + MARGIN.top + h / 2}" text-anchor="middle" fill="#555" transform="rotate(-90 ${ox + 12} ${oy + MARGIN.top + h / 2})">${esc(opts.yLabel)}</text>`,
    );
    for (const l of p.hlines) {
      out.push(
        `<line x1="${sx(0)}" x2="${sx(opts.xMax)}" y1="${sy(l.y)}" y2="${sy(l.y)}" stroke="#c00" stroke-dasharray="4 3"/>`,
      );
      out.push(
        `<text x="${sx(opts.xMax) - 2}" y="${sy(l.y) - 3}" text-anchor="end" fill="#c00">${esc(l.label)}</text>`,
      );
    }
    for (const s of p.series) {
      let d = '';
      let pen = false;
      for (let k = 0; k < s.x.length; k++) {
        const x = s.x[k] as number;
        const y = s.y[k] as number;
        if (Number.isNaN(y) || x > opts.xMax) {
          pen = false;
          continue;
        }
        d += `${pen ? 'L' : 'M'}${sx(x).toFixed(1)},${sy(y).toFixed(1)}`;
        pen = true;
      }
      out.push(`<path d="${d}" fill="none" stroke="${s.color}" stroke-width="1.3"/>`);
    }
  });
  out.push('</svg>');
  return out.join('\n');
}
