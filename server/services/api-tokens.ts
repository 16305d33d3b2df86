import { createHash, randomBytes } from 'node:crypto';
import { and, desc, eq, isNull, lt, or, sql } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { apiTokens, users } from '../db/schema/index';
import { API_TOKEN_PREFIX, type ApiToken, type ApiTokenCreate, type ApiTokenCreated, type ApiTokenScope } from '../../shared/api-tokens';
import type { SessionUser } from '../../shared/auth';
import { HttpError, notFound } from '../http-error';
import { loadSessionUser } from './auth';
import { recordAudit } from './users';

/** 32 random bytes: 256 bits, so a plain SHA-256 is enough at rest (no slow hash needed). */
export function newTokenSecret(): string {
  return API_TOKEN_PREFIX + randomBytes(32).toString('base64url');
}

export const hashToken = (token: string) => createHash('sha256').update(token, 'utf8').digest('hex');

/** How often the last-use time is written at most; every request would be a write per call. */
const LAST_USE_RESOLUTION_S = 60;

type Row = typeof apiTokens.$inferSelect & { userName: string };

function standing(row: typeof apiTokens.$inferSelect, now = new Date()): ApiToken['standing'] {
  if (row.revokedAt) return 'revoked';
  return row.expiresAt <= now ? 'expired' : 'active';
}

function toApiToken(row: Row): ApiToken {
  return {
    id: row.id,
    name: row.name,
    scope: row.scope,
    hint: row.hint,
    userId: row.userId,
    userName: row.userName,
    expiresAt: row.expiresAt.toISOString(),
    revokedAt: row.revokedAt?.toISOString() ?? null,
    lastUsedAt: row.lastUsedAt?.toISOString() ?? null,
    createdAt: row.createdAt.toISOString(),
    standing: standing(row),
  };
}

const listColumns = { token: apiTokens, userName: users.name };

export async function createToken(db: DbOrTx, viewer: SessionUser, input: ApiTokenCreate): Promise<ApiTokenCreated> {
  const token = newTokenSecret();
  const expiresAt = new Date(Date.now() + input.expiresInDays * 86_400_000);
  const id = await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(apiTokens)
      .values({
        shopId: viewer.shop.id,
        userId: viewer.id,
        name: input.name,
        scope: input.scope,
        tokenHash: hashToken(token),
        hint: token.slice(0, API_TOKEN_PREFIX.length + 6),
        expiresAt,
      })
      .returning({ id: apiTokens.id });
    await recordAudit(tx, viewer.shop.id, viewer.id, 'api_token.created', { tokenId: row!.id, name: input.name, scope: input.scope });
    return row!.id;
  });
  return { token, details: await getToken(db, viewer, id) };
}

async function getToken(db: DbOrTx, viewer: SessionUser, id: number): Promise<ApiToken> {
  const [row] = await db
    .select(listColumns)
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(and(eq(apiTokens.shopId, viewer.shop.id), eq(apiTokens.id, id), viewer.role === 'owner' ? undefined : eq(apiTokens.userId, viewer.id)));
  if (!row) throw notFound('Token');
  return toApiToken({ ...row.token, userName: row.userName });
}

/** The viewer's own tokens; the shop owner sees every token in the shop, to revoke any of them. */
export async function listTokens(db: DbOrTx, viewer: SessionUser): Promise<ApiToken[]> {
  const rows = await db
    .select(listColumns)
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(and(eq(apiTokens.shopId, viewer.shop.id), viewer.role === 'owner' ? undefined : eq(apiTokens.userId, viewer.id)))
    .orderBy(desc(apiTokens.createdAt), desc(apiTokens.id));
  return rows.map((r) => toApiToken({ ...r.token, userName: r.userName }));
}

/** Revoking is for the token's owner or the shop owner; a revoked token stays listed, marked so. */
export async function revokeToken(db: DbOrTx, viewer: SessionUser, id: number): Promise<ApiToken> {
  await db.transaction(async (tx) => {
    const [row] = await tx
      .update(apiTokens)
      .set({ revokedAt: sql`coalesce(${apiTokens.revokedAt}, now())`, revokedBy: sql`coalesce(${apiTokens.revokedBy}, ${viewer.id})` })
      .where(and(eq(apiTokens.shopId, viewer.shop.id), eq(apiTokens.id, id), viewer.role === 'owner' ? undefined : eq(apiTokens.userId, viewer.id)))
      .returning({ id: apiTokens.id, name: apiTokens.name });
    if (!row) throw notFound('Token');
    await recordAudit(tx, viewer.shop.id, viewer.id, 'api_token.revoked', { tokenId: row.id, name: row.name });
  });
  return getToken(db, viewer, id);
}

export interface TokenSignIn {
  user: SessionUser;
  tokenId: number;
  scope: ApiTokenScope;
}

const unauthorised = (message: string) => new HttpError(401, message, 'bad_token');

/**
 * The user a bearer token stands for. The token works only while it is unrevoked, unexpired and
 * its user is active; it carries its user's role and shop, so every route's checks apply as to a session.
 */
export async function signInWithToken(db: DbOrTx, token: string): Promise<TokenSignIn> {
  const [row] = await db.select().from(apiTokens).where(eq(apiTokens.tokenHash, hashToken(token)));
  if (!row) throw unauthorised('This API token is not known; create one under My account');
  const state = standing(row);
  if (state === 'revoked') throw unauthorised('This API token has been revoked; create a new one under My account');
  if (state === 'expired') throw unauthorised('This API token has expired; create a new one under My account');
  const user = await loadSessionUser(db, row.userId);
  if (!user || user.shop.id !== row.shopId) throw unauthorised('The account this API token belongs to is switched off');
  await db
    .update(apiTokens)
    .set({ lastUsedAt: sql`now()` })
    .where(
      and(
        eq(apiTokens.id, row.id),
        or(isNull(apiTokens.lastUsedAt), lt(apiTokens.lastUsedAt, sql`now() - make_interval(secs => ${LAST_USE_RESOLUTION_S})`)),
      ),
    );
  return { user, tokenId: row.id, scope: row.scope };
}
