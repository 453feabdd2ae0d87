import type { FastifyReply } from 'fastify';
import { Type } from 'typebox';
import {
  convertTemperatures,
  TEMPERATURE_SENTENCE_FIELDS,
  type TemperatureUnit,
} from '../../analysis/physics/temperature-unit.js';

/** `?unit=` of every read endpoint that returns temperatures. */
export const UnitParam = Type.Union([Type.Literal('C'), Type.Literal('F')], {
  default: 'C',
  description:
    'unit of every temperature in the reply (fields ending in C or CPerDay, and °C figures in the sentences): C (default) or F. ' +
    'Differences (margins, rises, slopes) convert without the 32° offset. Field names keep their C suffix; the reply says the unit in `unit` and the x-temperature-unit header.',
});

export const UnitField = Type.Union([Type.Literal('C'), Type.Literal('F')], {
  description: 'unit of the temperatures in this reply',
});

/** Header that states the unit of a reply's temperatures. */
export const UNIT_HEADER = 'x-temperature-unit';

/** States the unit in the header and converts `body`'s temperatures (and finding sentences) to it. */
export function inUnit<T>(reply: FastifyReply, unit: TemperatureUnit, body: T): T {
  reply.header(UNIT_HEADER, unit);
  return convertTemperatures(body, unit, TEMPERATURE_SENTENCE_FIELDS);
}
