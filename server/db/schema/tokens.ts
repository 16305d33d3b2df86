import { pgTable, pgEnum, integer, text, timestamp, varchar, index, uniqueIndex } from 'drizzle-orm/pg-core';
import { API_TOKEN_SCOPES } from '../../../shared/api-tokens';
import { shops, users } from './shop';

export const apiTokenScopeEnum = pgEnum('api_token_scope', API_TOKEN_SCOPES);

/** Personal tokens for bench scripts; only the SHA-256 of the secret is kept. */
export const apiTokens = pgTable(
  'api_tokens',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    userId: integer()
      .notNull()
      .references(() => users.id),
    name: text().notNull(),
    scope: apiTokenScopeEnum().notNull(),
    /** Hex SHA-256 of the whole token. */
    tokenHash: varchar({ length: 64 }).notNull(),
    /** The first characters of the token, shown in lists so its owner can tell tokens apart. */
    hint: varchar({ length: 16 }).notNull(),
    expiresAt: timestamp({ withTimezone: true }).notNull(),
    revokedAt: timestamp({ withTimezone: true }),
    revokedBy: integer().references(() => users.id),
    lastUsedAt: timestamp({ withTimezone: true }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('api_tokens_hash_idx').on(t.tokenHash), index('api_tokens_shop_user_idx').on(t.shopId, t.userId)],
);
