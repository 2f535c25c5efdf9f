/**
 * Ids in paths, queries and bodies. Every id is a PostgreSQL integer (at most
 * 2,147,483,647), so a larger one is refused here, naming its field, rather
 * than failing in the database. In a path or query an id is written one way
 * only, in plain digits: `1e1`, `0x10`, `010`, ` 1` or `+1` are refused, not
 * read as 10, 16 or 8, so no two addresses name the same thing.
 */
import { z } from 'zod';

export const MAX_ID = 2_147_483_647;
const CANONICAL = /^[1-9][0-9]{0,9}$/;

/** An id in a path or query string: the digits of a positive integer, nothing else. */
export const idParam = (name: string) =>
  z
    .string({ error: `${name} must be one positive whole number` })
    .regex(CANONICAL, `${name} must be a positive whole number in plain digits (no sign, leading zero, exponent or hex)`)
    .refine((v) => Number(v) <= MAX_ID, `${name} must be at most ${MAX_ID}`)
    .transform(Number);

/** An id in a JSON body. */
export const idField = (name: string) =>
  z
    .number({ error: (iss) => (iss.input === undefined ? `${name} is required` : `${name} must be a number`) })
    .int(`${name} must be a whole number`)
    .positive(`${name} must be a positive whole number`)
    .max(MAX_ID, `${name} must be at most ${MAX_ID}`);
