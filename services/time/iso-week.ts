import { zonedParts, zonedTimeToUtcMs } from './zoned-time.js';
import { DAY_MS, WEEK_MS } from './durations.js';

/**
 * ISO 8601 week dates: weeks start on Monday, and week 1 of a year is the week holding that
 * year's first Thursday (so 2021-01-03, a Sunday, belongs to 2020-W53).
 */
export interface IsoWeek {
  year: number;
  week: number;
}

/** The epoch (1970-01-01) was a Thursday: the first Monday 00:00 UTC is 4 days later. */
const MONDAY_OFFSET_MS = 4 * DAY_MS;
const ISO_WEEK_PATTERN = /^(\d{4})-W(\d{2})$/;

/** Start (Monday 00:00 UTC) of the UTC ISO week containing `ms`, epoch ms. */
export function utcWeekStartMs(ms: number): number {
  return Math.floor((ms - MONDAY_OFFSET_MS) / WEEK_MS) * WEEK_MS + MONDAY_OFFSET_MS;
}

/** Formats as `YYYY-Www`, e.g. `2026-W48`. */
export function formatIsoWeek(w: IsoWeek): string {
  return `${w.year}-W${String(w.week).padStart(2, '0')}`;
}

/** Number of ISO weeks in `year` (52 or 53): a year has 53 when 28 December falls in week 53. */
export function isoWeeksInYear(year: number): number {
  return isoWeekOfDate(year, 12, 28).week;
}

/** The ISO week holding the calendar date (month 1–12). */
export function isoWeekOfDate(year: number, month: number, day: number): IsoWeek {
  const ms = Date.UTC(year, month - 1, day);
  const weekday = ((new Date(ms).getUTCDay() + 6) % 7) + 1;
  // The Thursday of the same week decides the year.
  const thursday = new Date(ms + (4 - weekday) * DAY_MS);
  const isoYear = thursday.getUTCFullYear();
  const week = Math.floor((thursday.getTime() - Date.UTC(isoYear, 0, 1)) / (7 * DAY_MS)) + 1;
  return { year: isoYear, week };
}

/** Parses `YYYY-Www`; throws RangeError for malformed text or a week the year does not have. */
export function parseIsoWeek(text: string): IsoWeek {
  const m = ISO_WEEK_PATTERN.exec(text);
  if (!m) throw new RangeError(`'${text}' is not an ISO week like 2026-W48`);
  const w = { year: Number(m[1]), week: Number(m[2]) };
  if (w.week < 1 || w.week > isoWeeksInYear(w.year)) throw new RangeError(`${w.year} has no ISO week ${w.week}`);
  return w;
}

/** The calendar date (YYYY-MM-DD) of day `weekday` (1 = Monday … 7 = Sunday) of the week. */
export function isoWeekDate(w: IsoWeek, weekday = 1): string {
  const jan4 = Date.UTC(w.year, 0, 4);
  const jan4Weekday = ((new Date(jan4).getUTCDay() + 6) % 7) + 1;
  const monday = jan4 - (jan4Weekday - 1) * DAY_MS + (w.week - 1) * 7 * DAY_MS;
  return new Date(monday + (weekday - 1) * DAY_MS).toISOString().slice(0, 10);
}

/** The week after (or, with a negative step, before) `week`. */
export function addIsoWeeks(week: IsoWeek, step: number): IsoWeek {
  const [y, m, d] = isoWeekDate(week).split('-').map(Number) as [number, number, number];
  const ms = Date.UTC(y, m - 1, d) + step * 7 * DAY_MS;
  const date = new Date(ms);
  return isoWeekOfDate(date.getUTCFullYear(), date.getUTCMonth() + 1, date.getUTCDate());
}

/** A week as a time window in a time zone: [Monday 00:00, next Monday 00:00) local time. */
export interface WeekWindow {
  isoWeek: string;
  timeZone: string;
  /** The seven local dates, Monday first (YYYY-MM-DD). */
  dates: string[];
  startMs: number;
  endMs: number;
}

/** The window of an ISO week in `timeZone`. */
export function weekWindow(week: IsoWeek, timeZone: string): WeekWindow {
  const dates = [1, 2, 3, 4, 5, 6, 7].map((d) => isoWeekDate(week, d));
  const at = (date: string) => {
    const [y, m, d] = date.split('-').map(Number) as [number, number, number];
    return zonedTimeToUtcMs(y, m, d, 0, timeZone);
  };
  const next = isoWeekDate(addIsoWeeks(week, 1));
  return { isoWeek: formatIsoWeek(week), timeZone, dates, startMs: at(dates[0]!), endMs: at(next) };
}

/** The ISO week holding instant `ms` on the local calendar of `timeZone`. */
export function isoWeekAt(ms: number, timeZone: string): IsoWeek {
  const p = zonedParts(ms, timeZone);
  return isoWeekOfDate(p.year, p.month, p.day);
}

/** The last ISO week that has fully ended at `ms` in `timeZone` (the week before the current one). */
export function lastCompleteIsoWeek(ms: number, timeZone: string): IsoWeek {
  return addIsoWeeks(isoWeekAt(ms, timeZone), -1);
}
