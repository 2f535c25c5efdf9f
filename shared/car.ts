/**
 * The car a bench runs, as it travels (sim/compiled-car.ts): the parameters
 * with the permanent faults applied and a schedule of changes written as
 * parameter operations. Schemas for the changes the bench logs (an
 * instructor's injection applied) and the server checks.
 */
import { z } from 'zod';
import { FLAG_PATHS, INDEX_LIST_PATHS, NUMERIC_OPS, type CarChange, type ParamOp } from '../sim/car-changes.ts';
import type { CompiledCar } from '../sim/compiled-car.ts';
import { VEHICLE_PARAM_BOUNDS, type NumericParamPath } from '../sim/params.ts';
import { vehicleParamsSchema } from './scenario.ts';

const NUMERIC_PATHS = Object.keys(VEHICLE_PARAM_BOUNDS) as NumericParamPath[];

export const paramOpSchema = z.union(
  [
    z.strictObject({
      path: z.enum(NUMERIC_PATHS as [NumericParamPath, ...NumericParamPath[]]),
      op: z.enum(NUMERIC_OPS as ['set', 'add', 'mul', 'div', 'max', 'min']),
      value: z.number().finite(),
    }),
    z.strictObject({ path: z.enum(INDEX_LIST_PATHS as ['alternator.openDiodes', 'alternator.shortedDiodes', 'alternator.openPhases']), op: z.literal('include'), value: z.number().int().min(0).max(5) }),
    z.strictObject({ path: z.enum(FLAG_PATHS as ['wiring.fusibleLinkOpen']), op: z.literal('set'), value: z.boolean() }),
  ],
  { error: 'An operation is {path, op, value}: a numeric parameter with set, add, mul, div or max; an index list with include; a flag with set' },
) satisfies z.ZodType<ParamOp>;

export const carChangeSchema = z.strictObject({
  id: z
    .string()
    .min(1, 'a change id must not be empty')
    .max(64, 'a change id is at most 64 characters')
    .regex(/^[A-Za-z0-9_.:-]+$/, 'a change id may contain letters, digits and _ . : - only'),
  onsetS: z.number().finite().min(0, 'onsetS must not be negative'),
  intermittent: z.strictObject({ periodS: z.number().finite().positive(), onFraction01: z.number().min(0).max(1) }).nullable(),
  ops: z.array(paramOpSchema).min(1, 'a change has at least one operation').max(8, 'a change has at most 8 operations'),
}) satisfies z.ZodType<CarChange>;

export const compiledCarSchema = z.object({ params: vehicleParamsSchema, changes: z.array(carChangeSchema) }) satisfies z.ZodType<CompiledCar>;
