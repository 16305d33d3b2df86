import { pgTable, pgEnum, integer, text, timestamp, doublePrecision, index, jsonb } from 'drizzle-orm/pg-core';
import { sql, type SQL } from 'drizzle-orm';
import { UNIT_KINDS } from '../../../shared/customers';
import { shops } from './shop';
import { modelKeySql, SEARCH_CONFIG, serialKeySql, tsvector } from './search-columns';

export const unitKindEnum = pgEnum('unit_kind', UNIT_KINDS);

export const customers = pgTable(
  'customers',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    name: text().notNull(),
    email: text().notNull().default(''),
    phone: text().notNull().default(''),
    address: text().notNull().default(''),
    notes: text().notNull().default(''),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    searchVector: tsvector()
      .notNull()
      .generatedAlwaysAs(
        (): SQL =>
          sql`setweight(to_tsvector(${SEARCH_CONFIG}, ${customers.name}), 'A') || setweight(to_tsvector(${SEARCH_CONFIG}, ${customers.email} || ' ' || ${customers.phone}), 'B') || setweight(to_tsvector(${SEARCH_CONFIG}, ${customers.notes}), 'C')`,
      ),
  },
  (t) => [index('customers_shop_idx').on(t.shopId), index('customers_search_idx').using('gin', t.searchVector).with({ fastupdate: false })],
);

export const units = pgTable(
  'units',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    customerId: integer().notNull().references(() => customers.id),
    kind: unitKindEnum().notNull(),
    maker: text().notNull(),
    model: text().notNull(),
    serial: text().notNull().default(''),
    notes: text().notNull().default(''),
    /** Source inputs on the selector, in the unit's spelling; empty = the usual ones for its kind. */
    inputs: jsonb().$type<string[]>().notNull().default([]),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    /** Maker and model as one forgiving key: earlier jobs on the same model are found by it. */
    modelKey: text()
      .notNull()
      .generatedAlwaysAs((): SQL => modelKeySql(units.maker, units.model)),
    serialKey: text()
      .notNull()
      .generatedAlwaysAs((): SQL => serialKeySql(units.serial)),
    searchVector: tsvector()
      .notNull()
      .generatedAlwaysAs(
        (): SQL =>
          sql`setweight(to_tsvector(${SEARCH_CONFIG}, ${units.maker} || ' ' || ${units.model} || ' ' || ${units.serial}), 'A') || setweight(to_tsvector(${SEARCH_CONFIG}, ${units.notes}), 'C')`,
      ),
  },
  (t) => [
    index('units_shop_idx').on(t.shopId),
    index('units_customer_idx').on(t.customerId),
    index('units_model_key_idx').on(t.shopId, t.modelKey),
    index('units_serial_key_idx').on(t.shopId, t.serialKey.op('text_pattern_ops')),
    index('units_search_idx').using('gin', t.searchVector).with({ fastupdate: false }),
  ],
);

/** Published figures for one maker and model, each with where it came from. */
export const specSheets = pgTable(
  'spec_sheets',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    maker: text().notNull(),
    model: text().notNull(),
    notes: text().notNull().default(''),
    /** Source inputs the model has, as published. */
    inputs: jsonb().$type<string[]>().notNull().default([]),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('spec_sheets_shop_idx').on(t.shopId)],
);

export const specFigures = pgTable(
  'spec_figures',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    specSheetId: integer()
      .notNull()
      .references(() => specSheets.id, { onDelete: 'cascade' }),
    /** One of shared/specs.ts SPEC_METRICS. */
    metric: text().notNull(),
    value: doublePrecision().notNull(),
    condition: text().notNull().default(''),
    source: text().notNull().default(''),
  },
  (t) => [index('spec_figures_sheet_idx').on(t.specSheetId)],
);
