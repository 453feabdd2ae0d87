import { Type, type TSchema } from 'typebox';

export const ErrorBody = Type.Object(
  {
    error: Type.Object({
      code: Type.String({
        description: 'machine-readable error code, e.g. validation_failed, unauthorized, forbidden',
      }),
      message: Type.String({ description: 'what went wrong, in words' }),
    }),
  },
  { $id: 'ErrorBody', description: 'The uniform error body.' },
);

/** A vehicle id (without anchors, to build list patterns from). */
export const VEHICLE_ID_PATTERN = '[A-Za-z0-9][A-Za-z0-9_.:-]{0,63}';

export const VehicleIdParams = Type.Object({
  vehicleId: Type.String({ pattern: `^${VEHICLE_ID_PATTERN}$`, description: 'the vehicle id the gateway reports' }),
});

const ERROR_DESCRIPTIONS: Record<number, string> = {
  400: 'malformed request or failed validation',
  401: 'no, unknown or revoked API key',
  403: 'the key lacks the scope, or the vehicle belongs to another fleet',
  404: 'not found',
  409: 'conflict with the current state',
  413: 'body or batch too large, a line over 64 KiB, a JSON value over 1 MiB, too many blank lines, or gzip that expands more than 100-fold',
  415: 'unsupported Content-Type or Content-Encoding',
  429: 'rate limit of the API key, or of failed authentications from the address, exceeded; retry after Retry-After seconds',
  503: 'database unavailable, or a collision with concurrent requests: nothing was stored; retry after Retry-After seconds',
};

/** Error responses for a route's schema, each with the uniform body. */
export function errorResponses(...statuses: number[]): Record<number, TSchema> {
  const out: Record<number, TSchema> = {};
  for (const s of [...statuses, 429, 503])
    out[s] = Type.Ref('ErrorBody', { description: ERROR_DESCRIPTIONS[s] ?? 'error' });
  return out;
}

export const SECURITY = [{ bearerAuth: [] }];
