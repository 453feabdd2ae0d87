/**
 * The one conversion of temperatures for output: the analysis and the tables keep °C, and a
 * reader may ask for °F (`?unit=F`). A temperature (a reading, a boiling point) converts as
 * °F = °C · 9/5 + 32; a difference of temperatures (a margin, a rise, a slope per day) as
 * Δ°F = Δ°C · 9/5 (NIST SP 811, B.9 — from memory).
 */
export type TemperatureUnit = 'C' | 'F';

export const TEMPERATURE_UNITS: readonly TemperatureUnit[] = ['C', 'F'];

/** Converted values keep three decimals (a conversion adds no precision). */
const DECIMALS = 3;
const roundTo = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

/** °C or °F. */
export const degreeSign = (unit: TemperatureUnit): string => (unit === 'F' ? '°F' : '°C');

/**
 * A temperature in `unit`.
 * @example temperatureIn(100, 'F') // 212
 */
export function temperatureIn(celsius: number, unit: TemperatureUnit): number {
  return unit === 'F' ? roundTo((celsius * 9) / 5 + 32, DECIMALS) : celsius;
}

/**
 * A difference of temperatures (or a rate such as °C/day) in `unit`.
 * @example temperatureDifferenceIn(10, 'F') // 18
 */
export function temperatureDifferenceIn(celsius: number, unit: TemperatureUnit): number {
  return unit === 'F' ? roundTo((celsius * 9) / 5, DECIMALS) : celsius;
}

/** Field names that hold a difference of temperatures, not a temperature. */
const DIFFERENCE_NAME = /(margin|rise|offset|rmse|range|delta|drop|overshoot|above|below)C$/i;

/**
 * What a field holds, by the project's naming (a temperature field ends in `C`, a rate in
 * `CPerDay`): 'temperature', 'difference' or null (not a temperature).
 * @example temperatureKind('boilingPointC') // 'temperature'; temperatureKind('minMarginC') // 'difference'
 */
export function temperatureKind(name: string): 'temperature' | 'difference' | null {
  if (/[a-z0-9]CPerDay$/.test(name)) return 'difference';
  if (!/[a-z0-9]C$/.test(name)) return null;
  return DIFFERENCE_NAME.test(name) ? 'difference' : 'temperature';
}

const convertNumber = (name: string, v: number, unit: TemperatureUnit) => {
  const kind = temperatureKind(name);
  return kind === 'temperature' ? temperatureIn(v, unit) : kind === 'difference' ? temperatureDifferenceIn(v, unit) : v;
};

/**
 * A JSON value with every temperature field converted to `unit` (by temperatureKind of its
 * name, at any depth), an evidence item's `value`/`expected` by its `metric`, and a warm-up
 * curve's `points` ([minute, °C] pairs). `texts` names string fields whose sentences are
 * converted too (convertTemperatureText). A new object; °C returns the value itself.
 */
export function convertTemperatures<T>(value: T, unit: TemperatureUnit, texts: ReadonlySet<string> = new Set()): T {
  if (unit === 'C') return value;
  const walk = (v: unknown, name: string): unknown => {
    if (typeof v === 'number') return convertNumber(name, v, unit);
    if (typeof v === 'string') return texts.has(name) ? convertTemperatureText(v, unit) : v;
    if (Array.isArray(v)) {
      if (name === 'points')
        return v.map((p) =>
          Array.isArray(p) && typeof p[1] === 'number' ? [p[0], temperatureIn(p[1], unit)] : walk(p, ''),
        );
      return v.map((x) => walk(x, name));
    }
    if (v === null || typeof v !== 'object') return v;
    const o = v as Record<string, unknown>;
    const metric = typeof o.metric === 'string' ? o.metric : null;
    return Object.fromEntries(
      Object.entries(o).map(([k, x]) => [
        k,
        metric !== null && (k === 'value' || k === 'expected') && typeof x === 'number'
          ? convertNumber(metric, x, unit)
          : walk(x, k),
      ]),
    );
  };
  return walk(value, '') as T;
}

/** Fields of findings and of the report that hold sentences with °C figures (converted with the numbers). */
export const TEMPERATURE_SENTENCE_FIELDS: ReadonlySet<string> = new Set([
  'summary',
  'recommendedCheck',
  'profileNote',
  'why',
  'check',
  'checks',
  'headline',
  'openFinding',
]);

/** Words after "N °C" that make it a difference ("3 °C above", "2 °C a day"). */
const DIFFERENCE_AFTER =
  /^\s*(?:a day|per day|\/day|above|below|over|past|warmer|cooler|hotter|colder|higher|lower|more|less)\b/;
/** Words before it that do ("within 3 °C", "by about 5 °C"). */
const DIFFERENCE_BEFORE = /(?:within|by|by about|rising|falling)\s+$/;

/**
 * A sentence of the analysis with its temperatures in `unit`: "reached 118 °C" → "reached
 * 244 °F"; differences ("only 2.1 °C below", "rising 0.42 °C a day", "within 3 °C of") convert
 * without the offset. The number keeps its decimals.
 * @example convertTemperatureText('reached 100 °C, 5 °C above', 'F') // 'reached 212 °F, 9 °F above'
 */
export function convertTemperatureText(text: string, unit: TemperatureUnit): string {
  if (unit === 'C') return text;
  return text.replace(
    /(-?\d+(?:\.(\d+))?)\s?°C/g,
    (match, num: string, decimals: string | undefined, offset: number) => {
      const after = text.slice(offset + match.length);
      const before = text.slice(Math.max(0, offset - 20), offset);
      const difference = DIFFERENCE_AFTER.test(after) || DIFFERENCE_BEFORE.test(before);
      const celsius = Number(num);
      const f = difference ? (celsius * 9) / 5 : (celsius * 9) / 5 + 32;
      return `${roundTo(f, decimals?.length ?? 0)} °F`;
    },
  );
}
