import { z } from 'zod';
import { nameText } from '../names.ts';
import { emailSchema, passwordSchema, roleSchema } from './auth.ts';
import { idParam } from './ids.ts';

export const userSchema = z.object({
  id: z.number().int(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  disabled: z.boolean(),
  hasPassword: z.boolean(),
  createdAt: z.string(),
});
export type User = z.infer<typeof userSchema>;

/** A person's name, wherever it is typed (shared/names.ts). */
export const nameSchema = nameText('Name', 1, 120);

export const createUserSchema = z.object({
  email: emailSchema,
  name: nameSchema,
  role: roleSchema,
  /** Without a password the user is sent an invitation to set one. */
  password: passwordSchema.optional(),
});
export type CreateUserInput = z.infer<typeof createUserSchema>;

export const updateUserSchema = z
  .object({
    name: nameSchema.optional(),
    role: roleSchema.optional(),
    disabled: z.boolean().optional(),
  })
  .strict();
export type UpdateUserInput = z.infer<typeof updateUserSchema>;

export const userIdParamsSchema = z.object({ id: idParam('id') });

export const listUsersQuerySchema = z.object({
  role: roleSchema.optional(),
  q: z.string().max(120).optional(),
});
