import { round } from '../analysis/findings/finding.js';
import { degreeSign, type TemperatureUnit } from '../analysis/physics/temperature-unit.js';
import { escapeHtml as e } from './html-escape.js';
import { peakChartSvg, PROJECTION_DRAWN_DAYS } from './peak-chart.js';
import { warmupChartSvg } from './warmup-chart.js';
import type { VehicleSection } from './weekly-report-schema.js';

export const priorityClass = (p: string) => p.replace(/\s+/g, '-');
export const badge = (p: string) => `<span class="badge ${priorityClass(p)}">${e(p)}</span>`;

/** What the warm-up chart shows, in words (the caption). */
export function warmupCaption(section: VehicleSection): string {
  const w = section.warmup;
  const band = w.band.length
    ? `Green: the range of this vehicle's healthy cold starts (${w.baselineRuns} before ${w.baselineUntil}).`
    : 'No healthy range: fewer than three judged cold starts before the onset.';
  const curves = w.curves.length
    ? `Blue: the latest ${w.curves.length} cold start${w.curves.length > 1 ? 's' : ''}; ${w.curves.map((c) => (c.timeToTargetMin === null ? 'target not reached' : `${c.timeToTargetMin} min to target`)).join(', ')}.`
    : 'No cold start in the last two weeks.';
  return `${curves} ${band} A curve below the green range warms too slowly (thermostat stuck or opening early); above it or overshooting the thermostat line, the thermostat opens late.`;
}

/** What the daily-peak chart shows, in words, with the projected boiling date. */
export function peakCaption(section: VehicleSection, unit: TemperatureUnit = 'C'): string {
  const deg = degreeSign(unit);
  const p = section.peaks;
  const t = p.trend;
  let trend = 'Too few days with driving for a trend.';
  if (t) {
    if (t.daysToBoil === null)
      trend = `Peaks are not rising towards the boiling point (${t.senSlopeCPerDay.toFixed(2)} ${deg}/day).`;
    else {
      const days = Math.round(t.daysToBoil);
      trend =
        days < 1
          ? `At ${round(t.senSlopeCPerDay, 2)} ${deg}/day from a level of ${t.levelC} ${deg}, the daily peaks already reach the boiling point (${p.boilingPointC} ${deg}).`
          : `At ${round(t.senSlopeCPerDay, 2)} ${deg}/day from a level of ${t.levelC} ${deg}, the daily peak reaches the boiling point (${p.boilingPointC} ${deg}) ` +
            `around <b>${e(t.projectedBoilDate!)}</b>, in about ${days} day${days === 1 ? '' : 's'}.`;
      if (t.daysToBoil > PROJECTION_DRAWN_DAYS)
        trend += ` (The dashed projection is drawn for the first ${PROJECTION_DRAWN_DAYS} days.)`;
    }
  }
  const from =
    section.siteSource === 'depot'
      ? ` (depot ${e(section.depot ?? '')})`
      : section.siteSource === 'sea level'
        ? ' (sea level: no site given)'
        : '';
  const site =
    section.atmosphericPressureKpa !== undefined
      ? ` at ${round(section.atmosphericPressureKpa, 1)} kPa atmospheric pressure${from}`
      : '';
  const assumed = section.defaultProfile
    ? " These are the default profile values, not the vehicle's own: set its profile for a true figure."
    : '';
  return `${trend} Boiling point for a ${section.capPressureKpa} kPa cap and ${section.glycolPercent} % glycol by mass${site}.${assumed} Peaks climbing while ambient does not point to the cooling system, not the weather.`;
}

/** One at-risk vehicle: heading, the top finding, and its two charts. */
export function vehicleSectionHtml(section: VehicleSection, timeZone: string, unit: TemperatureUnit = 'C'): string {
  const label =
    (section.label ? ` <span class="note">${e(section.label)}</span>` : '') +
    (section.depot ? ` <span class="note">depot ${e(section.depot)}</span>` : '');
  return `<article class="vehicle" id="vehicle-${e(section.vehicleId)}" data-vehicle-id="${e(section.vehicleId)}">
<h3>${e(section.vehicleId)}${label} ${badge(section.priority)} <span class="note">risk ${section.riskScore} · ${e(section.engineFamily)}</span></h3>
<p class="headline">${e(section.headline)}</p>
<div class="charts">
<figure class="warmup">${warmupChartSvg(section.warmup, timeZone, section.vehicleId, unit)}<figcaption><b>Cold-start warm-ups.</b> ${e(warmupCaption(section))}</figcaption></figure>
<figure class="peaks">${peakChartSvg(section.peaks, section.vehicleId, unit)}<figcaption><b>Daily peak coolant vs ambient.</b> ${peakCaption(section, unit)}</figcaption></figure>
</div>
</article>`;
}
