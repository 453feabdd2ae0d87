import { Type } from 'typebox';
import { BadRequestError } from '../errors.js';

export const TimeParam = (description: string) =>
  Type.Optional(
    Type.String({ minLength: 1, maxLength: 40, description: `${description}: RFC 3339 time or epoch milliseconds` }),
  );

/** Parses an RFC 3339 time or epoch milliseconds; 400 names the parameter when it is neither. */
export function parseTimeParam(name: string, value: string | undefined): number | undefined {
  if (value === undefined) return undefined;
  const ms = /^-?\d+$/.test(value) ? Number(value) : Date.parse(value);
  if (!Number.isFinite(ms))
    throw new BadRequestError(
      `${name} must be an RFC 3339 time or epoch milliseconds, got '${value}'`,
      'validation_failed',
    );
  return ms;
}
