import express, { Router } from 'express';
import type { Db } from '../db/client';
import type { BillingRuntime } from '../billing-runtime';
import { handleWebhookEvent, verifyWebhook } from '../services/payments';
import { invoiceRoutes } from './invoices';
import { outboxRoutes } from './outbox';
import { portalRoutes } from './portal';
import { quoteRoutes } from './quotes';
import { shopSettingsRoutes } from './shop-settings';
import type { SignedInCache } from '../services/signed-in-cache';

/**
 * The payment provider's webhook. Mounted on the app before the API's JSON parser and CSRF check:
 * the signature covers the exact bytes sent, and the caller is the provider, not a browser.
 */
export function paymentWebhookRoutes(db: Db, runtime: BillingRuntime): Router {
  const r = Router();
  r.post('/api/payments/webhook', express.raw({ type: () => true, limit: '1mb' }), async (req, res) => {
    const raw = Buffer.isBuffer(req.body) ? req.body : Buffer.alloc(0);
    const event = verifyWebhook(runtime, raw, req.get('stripe-signature'));
    const outcome = await handleWebhookEvent(db, runtime, event);
    res.json({ received: true, outcome });
  });
  return r;
}

/** Every billing route under /api: invoices, estimates, payments, outbox, settings, the customer's view. */
export function billingRoutes(db: Db, runtime: BillingRuntime, signedIn: SignedInCache): Router {
  const r = Router();
  r.use(invoiceRoutes(db, runtime));
  r.use(quoteRoutes(db, runtime));
  r.use(portalRoutes(db, runtime));
  r.use(outboxRoutes(db, runtime));
  r.use(shopSettingsRoutes(db, signedIn));
  return r;
}
