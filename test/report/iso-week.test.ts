import { describe, expect, it } from 'vitest';
import {
  addIsoWeeks,
  formatIsoWeek,
  isoWeekAt,
  isoWeekDate,
  isoWeekOfDate,
  isoWeeksInYear,
  lastCompleteIsoWeek,
  parseIsoWeek,
  utcWeekStartMs,
  weekWindow,
} from '../../services/time/iso-week.js';

// Expected values follow ISO 8601 week dates (Monday first; week 1 holds the year's first
// Thursday); the calendar dates were read off a printed calendar (from memory where noted).
describe('ISO 8601 week arithmetic', () => {
  it('starts 2026-W48 on Monday 2026-11-23 and ends it on Sunday 2026-11-29', () => {
    expect(isoWeekDate(parseIsoWeek('2026-W48'), 1)).toBe('2026-11-23');
    expect(isoWeekDate(parseIsoWeek('2026-W48'), 7)).toBe('2026-11-29');
  });

  it.each([
    // ISO 8601: 2021-01-03 (a Sunday) belongs to the last week of 2020, which has 53 weeks.
    [2021, 1, 3, '2020-W53'],
    [2021, 1, 4, '2021-W01'],
    // 2008-12-29 (Monday) is in week 1 of 2009 (the week holding 2009-01-01, a Thursday).
    [2008, 12, 29, '2009-W01'],
    [2010, 1, 3, '2009-W53'],
    [2026, 1, 1, '2026-W01'],
    [2027, 1, 1, '2026-W53'],
  ])('puts %i-%i-%i in %s', (y, m, d, week) => {
    expect(formatIsoWeek(isoWeekOfDate(y, m, d))).toBe(week);
  });

  it('finds the Monday 00:00 UTC that starts the week of any instant', () => {
    // 2021-01-03 is a Sunday of 2020-W53, which began on Monday 2020-12-28 (the ISO 8601 example above).
    expect(new Date(utcWeekStartMs(Date.parse('2021-01-03T23:59:59.999Z'))).toISOString()).toBe(
      '2020-12-28T00:00:00.000Z',
    );
    expect(new Date(utcWeekStartMs(Date.parse('2021-01-04T00:00:00Z'))).toISOString()).toBe('2021-01-04T00:00:00.000Z');
    // Agrees with the week-date arithmetic on every day of two years.
    for (let ms = Date.parse('2026-01-01T12:00:00Z'); ms < Date.parse('2028-01-01T00:00:00Z'); ms += 86_400_000) {
      const d = new Date(ms);
      const monday = isoWeekDate(isoWeekOfDate(d.getUTCFullYear(), d.getUTCMonth() + 1, d.getUTCDate()), 1);
      expect(new Date(utcWeekStartMs(ms)).toISOString().slice(0, 10)).toBe(monday);
    }
  });

  it('knows which years have 53 weeks (years starting on a Thursday, or leap years starting on a Wednesday)', () => {
    expect([2015, 2020, 2026, 2032].map(isoWeeksInYear)).toEqual([53, 53, 53, 53]);
    expect([2019, 2021, 2025, 2027].map(isoWeeksInYear)).toEqual([52, 52, 52, 52]);
  });

  it('rejects malformed text and weeks the year does not have', () => {
    for (const bad of ['2026-48', '2026-W4', '2026W48', '2026-W00', '2025-W53', ''])
      expect(() => parseIsoWeek(bad)).toThrow(RangeError);
    expect(parseIsoWeek('2020-W53')).toEqual({ year: 2020, week: 53 });
  });

  it('steps across year ends', () => {
    expect(formatIsoWeek(addIsoWeeks(parseIsoWeek('2020-W53'), 1))).toBe('2021-W01');
    expect(formatIsoWeek(addIsoWeeks(parseIsoWeek('2021-W01'), -1))).toBe('2020-W53');
  });

  it('places the week window at local midnight of the fleet time zone, across a daylight-saving change', () => {
    // Europe/Berlin is UTC+1 in November and UTC+2 from the last Sunday of March (2026-03-29).
    const w48 = weekWindow(parseIsoWeek('2026-W48'), 'Europe/Berlin');
    expect(new Date(w48.startMs).toISOString()).toBe('2026-11-22T23:00:00.000Z');
    expect(new Date(w48.endMs).toISOString()).toBe('2026-11-29T23:00:00.000Z');
    const w13 = weekWindow(parseIsoWeek('2026-W13'), 'Europe/Berlin');
    expect(new Date(w13.startMs).toISOString()).toBe('2026-03-22T23:00:00.000Z');
    expect(new Date(w13.endMs).toISOString()).toBe('2026-03-29T22:00:00.000Z');
    expect(w13.endMs - w13.startMs).toBe((7 * 24 - 1) * 3_600_000);
    expect(weekWindow(parseIsoWeek('2026-W48'), 'UTC').startMs).toBe(Date.UTC(2026, 10, 23));
  });

  it("takes the last complete week on the fleet's local calendar", () => {
    // Sunday 2026-11-29 23:30 UTC is already Monday 2026-11-30 in Berlin (week 49 has begun).
    const t = Date.UTC(2026, 10, 29, 23, 30);
    expect(formatIsoWeek(isoWeekAt(t, 'UTC'))).toBe('2026-W48');
    expect(formatIsoWeek(lastCompleteIsoWeek(t, 'UTC'))).toBe('2026-W47');
    expect(formatIsoWeek(lastCompleteIsoWeek(t, 'Europe/Berlin'))).toBe('2026-W48');
    expect(formatIsoWeek(lastCompleteIsoWeek(Date.UTC(2021, 0, 4, 12), 'UTC'))).toBe('2020-W53');
  });
});
