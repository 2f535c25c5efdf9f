import { z } from 'zod';
import { emailSchema, passwordSchema } from './auth.ts';

export const resetRequestSchema = z.object({ email: emailSchema });

export const setPasswordSchema = z.object({
  token: z.string().min(20, 'The link is incomplete').max(200, 'The link is not valid'),
  password: passwordSchema,
});
export type SetPasswordInput = z.infer<typeof setPasswordSchema>;
