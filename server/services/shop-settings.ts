import { eq } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { auditEvents, shops } from '../db/schema/index';
import { CURRENCIES, type Currency } from '../../shared/money';
import type { ShopSettings } from '../../shared/billing';
import { notFound } from '../http-error';

const isCurrency = (c: string): c is Currency => (CURRENCIES as readonly string[]).includes(c);

export async function getShopSettings(db: DbOrTx, shopId: number): Promise<ShopSettings> {
  const [row] = await db.select().from(shops).where(eq(shops.id, shopId));
  if (!row) throw notFound('Shop');
  return {
    name: row.name,
    email: row.email,
    address: row.address,
    // A shop made before the list existed keeps working; the form then asks for a listed one.
    currency: isCurrency(row.currency) ? row.currency : 'EUR',
    labourRateMinor: row.labourRateMinor,
    taxRateBp: row.taxRateBp,
    invoicePrefix: row.invoicePrefix,
  };
}

/** The owner's money and contact settings; earlier invoices keep the rate and currency they were made with. */
export async function updateShopSettings(db: DbOrTx, shopId: number, userId: number, input: ShopSettings): Promise<ShopSettings> {
  await db.transaction(async (tx) => {
    const [row] = await tx.update(shops).set(input).where(eq(shops.id, shopId)).returning({ id: shops.id });
    if (!row) throw notFound('Shop');
    await tx.insert(auditEvents).values({ shopId, userId, action: 'shop.settings_changed', detail: { ...input } });
  });
  return getShopSettings(db, shopId);
}
