import { z } from 'zod';
import { emailSchema, passwordSchema, roleSchema } from './auth.ts';

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

export const nameSchema = z.string().trim().min(1, 'Name is required').max(120, 'Name must be at most 120 characters');

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

export const userIdParamsSchema = z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') });

export const listUsersQuerySchema = z.object({
  role: roleSchema.optional(),
  q: z.string().max(120).optional(),
});
