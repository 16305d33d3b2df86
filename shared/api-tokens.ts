import { z } from 'zod';

// Personal API tokens: a bench script signs in with one instead of a password and a session.

export const API_TOKEN_SCOPES = ['upload_captures', 'read_results'] as const;
export const apiTokenScopeSchema = z.enum(API_TOKEN_SCOPES);
export type ApiTokenScope = z.infer<typeof apiTokenScopeSchema>;
export const API_TOKEN_SCOPE_LABELS: Record<ApiTokenScope, string> = {
  upload_captures: 'Upload captures (and read them back)',
  read_results: 'Read results only',
};

/** Every token starts with this, so a leaked one is easy to recognise in logs and scanners. */
export const API_TOKEN_PREFIX = 'qpt_';
export const MAX_TOKEN_DAYS = 365;

export const apiTokenCreateSchema = z.object({
  name: z.string().trim().min(1, 'Name the token (e.g. the bench PC it lives on)').max(80),
  scope: apiTokenScopeSchema,
  expiresInDays: z.number().int().min(1).max(MAX_TOKEN_DAYS, `A token lives at most ${MAX_TOKEN_DAYS} days`),
});
export type ApiTokenCreate = z.infer<typeof apiTokenCreateSchema>;

export const apiTokenSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  scope: apiTokenScopeSchema,
  hint: z.string(),
  userId: z.number().int(),
  userName: z.string(),
  expiresAt: z.string(),
  revokedAt: z.string().nullable(),
  lastUsedAt: z.string().nullable(),
  createdAt: z.string(),
  /** 'active', or why the token no longer works. */
  standing: z.enum(['active', 'expired', 'revoked']),
});
export type ApiToken = z.infer<typeof apiTokenSchema>;

/** The answer to creating a token: the only time its secret is shown. */
export const apiTokenCreatedSchema = z.object({ token: z.string(), details: apiTokenSchema });
export type ApiTokenCreated = z.infer<typeof apiTokenCreatedSchema>;
