import { z } from 'zod';
import { roleSchema } from './roles';

export const loginRequestSchema = z.object({
  email: z.string().trim().toLowerCase().email('Enter a valid e-mail address'),
  password: z.string().min(1, 'Enter your password').max(200),
});
export type LoginRequest = z.infer<typeof loginRequestSchema>;

export const sessionUserSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  email: z.string(),
  role: roleSchema,
  customerId: z.number().int().nullable(),
  shop: z.object({ id: z.number().int(), name: z.string() }),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;

export const meResponseSchema = z.object({ user: sessionUserSchema, csrfToken: z.string() });
export type MeResponse = z.infer<typeof meResponseSchema>;
