import { z } from 'zod';
import { roleSchema } from './roles';

/** A few of the passwords that top every leaked-password list; refused outright. */
const COMMON_PASSWORDS = new Set([
  'password', 'password1', 'password123', '123456789012', 'qwertyuiop', 'letmeinplease', 'iloveyou1234',
  'administrator', 'welcome12345', 'changeme1234', 'qwerty123456', '111111111111', '000000000000',
]);

export const PASSWORD_MIN_LENGTH = 12;

/**
 * Length over complexity rules, as NIST SP 800-63B advises: at least 12 characters, not a
 * well-known password, not the e-mail address itself.
 */
export function passwordProblem(password: string, email = ''): string | null {
  if (password.length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters`;
  if (password.length > 200) return 'Use at most 200 characters';
  const lower = password.toLowerCase();
  if (COMMON_PASSWORDS.has(lower)) return 'That password is too well known; choose another';
  if (new Set(lower).size < 4) return 'Use more different characters';
  if (email && lower.includes(email.toLowerCase().split('@')[0]!) && email.split('@')[0]!.length >= 4) {
    return 'Do not build the password from your e-mail address';
  }
  return null;
}

export const userCreateSchema = z
  .object({
    email: z.string().trim().toLowerCase().email('Enter a valid e-mail address'),
    name: z.string().trim().min(1, 'Name is required').max(120),
    role: roleSchema,
    customerId: z.number().int().positive().nullable().default(null),
    password: z.string(),
  })
  .superRefine((v, ctx) => {
    const problem = passwordProblem(v.password, v.email);
    if (problem) ctx.addIssue({ code: 'custom', path: ['password'], message: problem });
    if (v.role === 'customer' && v.customerId === null) {
      ctx.addIssue({ code: 'custom', path: ['customerId'], message: 'A customer sign-in must belong to a customer record' });
    }
  });
export type UserCreate = z.infer<typeof userCreateSchema>;

export const userUpdateSchema = z.object({
  name: z.string().trim().min(1).max(120).optional(),
  role: roleSchema.optional(),
  customerId: z.number().int().positive().nullable().optional(),
  active: z.boolean().optional(),
});
export type UserUpdate = z.infer<typeof userUpdateSchema>;

export const passwordChangeSchema = z.object({
  currentPassword: z.string().min(1, 'Enter your current password'),
  newPassword: z.string(),
});
export type PasswordChange = z.infer<typeof passwordChangeSchema>;

export const passwordResetSchema = z.object({ newPassword: z.string() });

export const shopUserSchema = z.object({
  id: z.number().int(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  customerId: z.number().int().nullable(),
  active: z.boolean(),
  createdAt: z.string(),
  lastSignInAt: z.string().nullable(),
});
export type ShopUser = z.infer<typeof shopUserSchema>;

export const signInRecordSchema = z.object({
  id: z.number().int(),
  email: z.string(),
  ip: z.string(),
  succeeded: z.boolean(),
  at: z.string(),
});
export type SignInRecord = z.infer<typeof signInRecordSchema>;

export const auditRecordSchema = z.object({
  id: z.number().int(),
  action: z.string(),
  userName: z.string().nullable(),
  detail: z.record(z.string(), z.unknown()),
  at: z.string(),
});
export type AuditRecord = z.infer<typeof auditRecordSchema>;
