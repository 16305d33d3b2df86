import { and, asc, eq, ilike, or } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { customers, units } from '../db/schema/index';
import type { Customer, CustomerInput, Unit, UnitInput, UnitKind } from '../../shared/customers';
import { defaultInputs } from '../../shared/inputs';
import { notFound } from '../http-error';

const iso = (d: Date) => d.toISOString();

function toCustomer(row: typeof customers.$inferSelect): Customer {
  const { shopId: _shop, createdAt, searchVector: _search, ...rest } = row;
  return { ...rest, createdAt: iso(createdAt) };
}

export async function listCustomers(db: DbOrTx, shopId: number, search = ''): Promise<Customer[]> {
  const q = `%${search.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
  const rows = await db
    .select()
    .from(customers)
    .where(
      and(
        eq(customers.shopId, shopId),
        search ? or(ilike(customers.name, q), ilike(customers.email, q), ilike(customers.phone, q)) : undefined,
      ),
    )
    .orderBy(asc(customers.name));
  return rows.map(toCustomer);
}

export async function getCustomer(db: DbOrTx, shopId: number, id: number): Promise<Customer> {
  const [row] = await db
    .select()
    .from(customers)
    .where(and(eq(customers.shopId, shopId), eq(customers.id, id)));
  if (!row) throw notFound('Customer');
  return toCustomer(row);
}

export async function createCustomer(db: DbOrTx, shopId: number, input: CustomerInput): Promise<Customer> {
  const [row] = await db.insert(customers).values({ ...input, shopId }).returning();
  return toCustomer(row!);
}

export async function updateCustomer(db: DbOrTx, shopId: number, id: number, input: CustomerInput): Promise<Customer> {
  const [row] = await db
    .update(customers)
    .set(input)
    .where(and(eq(customers.shopId, shopId), eq(customers.id, id)))
    .returning();
  if (!row) throw notFound('Customer');
  return toCustomer(row);
}

const unitColumns = {
  id: units.id,
  customerId: units.customerId,
  customerName: customers.name,
  kind: units.kind,
  maker: units.maker,
  model: units.model,
  serial: units.serial,
  notes: units.notes,
  inputs: units.inputs,
  createdAt: units.createdAt,
};

/** A unit stored before inputs were kept (an empty list) has the usual ones for its kind. */
export function unitInputs(kind: UnitKind, stored: string[]): string[] {
  return stored.length ? stored : defaultInputs(kind);
}

const toUnit = (r: Omit<Unit, 'createdAt'> & { createdAt: Date }): Unit => ({ ...r, inputs: unitInputs(r.kind, r.inputs), createdAt: iso(r.createdAt) });

export async function listUnits(
  db: DbOrTx,
  shopId: number,
  filter: { customerId?: number; search?: string } = {},
): Promise<Unit[]> {
  const q = filter.search ? `%${filter.search.replace(/[%_\\]/g, (c) => `\\${c}`)}%` : null;
  const rows = await db
    .select(unitColumns)
    .from(units)
    .innerJoin(customers, eq(customers.id, units.customerId))
    .where(
      and(
        eq(units.shopId, shopId),
        filter.customerId ? eq(units.customerId, filter.customerId) : undefined,
        q ? or(ilike(units.maker, q), ilike(units.model, q), ilike(units.serial, q), ilike(customers.name, q)) : undefined,
      ),
    )
    .orderBy(asc(units.maker), asc(units.model));
  return rows.map(toUnit);
}

export async function getUnit(db: DbOrTx, shopId: number, id: number): Promise<Unit> {
  const [row] = await db
    .select(unitColumns)
    .from(units)
    .innerJoin(customers, eq(customers.id, units.customerId))
    .where(and(eq(units.shopId, shopId), eq(units.id, id)));
  if (!row) throw notFound('Unit');
  return toUnit(row);
}

export async function createUnit(db: DbOrTx, shopId: number, input: UnitInput): Promise<Unit> {
  await getCustomer(db, shopId, input.customerId);
  const [row] = await db
    .insert(units)
    .values({ ...input, inputs: input.inputs ?? defaultInputs(input.kind), shopId })
    .returning({ id: units.id });
  return getUnit(db, shopId, row!.id);
}

export async function updateUnit(db: DbOrTx, shopId: number, id: number, input: UnitInput): Promise<Unit> {
  await getCustomer(db, shopId, input.customerId);
  const [row] = await db
    .update(units)
    // Inputs left out of an edit stay as they were.
    .set({ ...input, inputs: input.inputs })
    .where(and(eq(units.shopId, shopId), eq(units.id, id)))
    .returning({ id: units.id });
  if (!row) throw notFound('Unit');
  return getUnit(db, shopId, row.id);
}
