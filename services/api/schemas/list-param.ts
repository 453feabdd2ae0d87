import { Type } from 'typebox';

/**
 * A query parameter holding one value or a comma-separated list of values from `allowed` (or,
 * without `allowed`, of values matching `item`); anything else fails validation (400).
 * @example listParam(['open', 'acknowledged'], 'statuses') // accepts 'open' and 'open,acknowledged'
 */
export function listParam(allowed: readonly string[] | { item: string }, description: string) {
  const item = Array.isArray(allowed) ? `(?:${allowed.join('|')})` : `(?:${(allowed as { item: string }).item})`;
  return Type.Optional(
    Type.String({
      pattern: `^${item}(?:,${item})*$`,
      maxLength: 2000,
      description: `${description}; one, or several separated by commas`,
    }),
  );
}

/** The values of a list parameter, without repeats (undefined when absent). */
export function listValues<T extends string = string>(value: string | undefined): T[] | undefined {
  return value === undefined ? undefined : ([...new Set(value.split(','))] as T[]);
}
