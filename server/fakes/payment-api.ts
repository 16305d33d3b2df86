/**
 * A local stand-in for the few payment-provider calls Quietpath makes (Checkout Sessions create
 * and retrieve), in the provider's wire format so the official SDK talks to it unchanged, plus a
 * plain test "card" page. Paying on that page completes the session and delivers a signed
 * checkout.session.completed webhook, signed with the SDK's own test-header helper, before
 * sending the customer back. Listens on 127.0.0.1 only; it moves no money.
 *
 * Sessions live in the shared database, so with several nodes each node's stand-in knows every
 * checkout: a session opened through one can be retrieved, shown and paid through another. The
 * webhook goes from the stand-in that took the payment to its own node, signed with that node's
 * webhook secret, so each node only ever checks signatures made with its own secret.
 */
import express, { type Request, type Response } from 'express';
import type { Server } from 'node:http';
import { randomBytes } from 'node:crypto';
import Stripe from 'stripe';
import type { Db } from '../db/client';
import { standinStore, type StandinSession as FakeSession } from './payment-standin-store';

export interface FakePaymentApi {
  url: string;
  setWebhookUrl(url: string): void;
  close(): Promise<void>;
}

const id = (prefix: string) => `${prefix}_${randomBytes(12).toString('hex')}`;
const esc = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
/** The provider's test card that always declines, so the decline path can be tried by hand. */
const DECLINING_CARD = '4000000000000002';

function apiError(res: Response, status: number, message: string, code?: string) {
  res.status(status).json({ error: { type: 'invalid_request_error', message, code } });
}

type Form = Record<string, unknown>;
const str = (v: unknown) => (typeof v === 'string' ? v : undefined);

export async function startFakePaymentApi(opts: { secretKey: string; webhookSecret: string; db: Db }): Promise<FakePaymentApi> {
  const sessions = standinStore(opts.db);
  const signer = new Stripe(opts.secretKey);
  let webhookUrl = '';
  let base = '';

  const app = express();
  app.disable('x-powered-by');
  app.use(express.urlencoded({ extended: true, limit: '100kb' }));

  const auth = (req: Request, res: Response, next: () => void) => {
    if (req.headers.authorization !== `Bearer ${opts.secretKey}`) return apiError(res, 401, 'Invalid API key provided');
    next();
  };

  app.post('/v1/checkout/sessions', auth, async (req, res) => {
    const key = str(req.headers['idempotency-key']);
    const earlier = key ? await sessions.byIdempotencyKey(key) : null;
    if (earlier) return res.json(publicView(earlier));
    const body = req.body as Form;
    const items = Array.isArray(body.line_items) ? (body.line_items as Form[]) : [];
    if (str(body.mode) !== 'payment') return apiError(res, 400, 'Only mode=payment is supported here', 'parameter_invalid');
    if (!str(body.success_url)) return apiError(res, 400, 'Missing required param: success_url.', 'parameter_missing');
    if (items.length === 0) return apiError(res, 400, 'Missing required param: line_items.', 'parameter_missing');
    let total = 0;
    let currency = '';
    const names: string[] = [];
    for (const item of items) {
      const price = (item.price_data ?? {}) as Form;
      const amount = Number(str(price.unit_amount));
      const quantity = Number(str(item.quantity) ?? '1');
      const cur = str(price.currency)?.toLowerCase() ?? '';
      if (!Number.isSafeInteger(amount) || amount < 0 || !Number.isSafeInteger(quantity) || quantity < 1 || !/^[a-z]{3}$/.test(cur)) {
        return apiError(res, 400, 'Invalid line_items price_data', 'parameter_invalid');
      }
      if (currency && cur !== currency) return apiError(res, 400, 'All line items must share one currency', 'parameter_invalid');
      currency = cur;
      total += amount * quantity;
      names.push(str((price.product_data as Form | undefined)?.name) ?? 'Item');
    }
    const sessionId = id('cs_test');
    const session: FakeSession = {
      id: sessionId,
      object: 'checkout.session',
      amount_total: total,
      currency,
      mode: 'payment',
      status: 'open',
      payment_status: 'unpaid',
      payment_intent: null,
      url: `${base}/pay/${sessionId}`,
      success_url: str(body.success_url)!,
      cancel_url: str(body.cancel_url) ?? null,
      client_reference_id: str(body.client_reference_id) ?? null,
      customer_email: str(body.customer_email) ?? null,
      metadata: Object.fromEntries(Object.entries((body.metadata ?? {}) as Form).map(([k, v]) => [k, String(v)])),
      created: Math.floor(Date.now() / 1000),
      livemode: false,
      _title: names.join(', '),
    };
    res.json(publicView(await sessions.create(session, key)));
  });

  app.get('/v1/checkout/sessions/:id', auth, async (req, res) => {
    const s = await sessions.get(String(req.params.id));
    if (!s) return apiError(res, 404, `No such checkout.session: '${String(req.params.id)}'`, 'resource_missing');
    res.json(publicView(s));
  });

  app.get('/pay/:id', async (req, res) => {
    const s = await sessions.get(String(req.params.id));
    if (!s) return res.status(404).type('html').send(page('Payment not found', '<p>This payment link is not known here.</p>'));
    res.type('html').send(cardPage(s, ''));
  });

  app.post('/pay/:id', async (req, res) => {
    const s = await sessions.get(String(req.params.id));
    if (!s) return res.status(404).type('html').send(page('Payment not found', '<p>This payment link is not known here.</p>'));
    if (s.status !== 'open') return res.status(409).type('html').send(page('Already paid', '<p>This payment is already complete.</p>'));
    const card = String((req.body as Form).card ?? '').replace(/\D/g, '');
    if (card.length < 12) return res.status(400).type('html').send(cardPage(s, 'Enter a card number.'));
    if (card === DECLINING_CARD) return res.status(402).type('html').send(cardPage(s, 'The card was declined. Nothing was charged.'));
    const paid = await sessions.complete(s.id, id('pi_test'));
    if (!paid) return res.status(409).type('html').send(page('Already paid', '<p>This payment is already complete.</p>'));
    const delivered = await deliver(paid);
    if (!delivered) {
      return res.status(502).type('html').send(page('Paid, shop not told yet', '<p>The payment went through but the shop could not be told yet. It will see it on the next delivery.</p>'));
    }
    res.redirect(303, paid.success_url.replace('{CHECKOUT_SESSION_ID}', paid.id));
  });

  /** Delivers checkout.session.completed, retrying a little, as the provider would. */
  async function deliver(s: FakeSession): Promise<boolean> {
    const event = {
      id: id('evt_test'),
      object: 'event',
      type: 'checkout.session.completed',
      api_version: Stripe.API_VERSION,
      created: Math.floor(Date.now() / 1000),
      livemode: false,
      pending_webhooks: 1,
      request: { id: null, idempotency_key: null },
      data: { object: publicView(s) },
    };
    const payload = JSON.stringify(event);
    for (let attempt = 0; attempt < 3 && webhookUrl; attempt++) {
      const header = signer.webhooks.generateTestHeaderString({ payload, secret: opts.webhookSecret });
      try {
        const r = await fetch(webhookUrl, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': header }, body: payload });
        if (r.ok) return true;
      } catch {
        /* the app may be restarting: try again */
      }
      await new Promise((r) => setTimeout(r, 100 * (attempt + 1)));
    }
    return false;
  }

  const server: Server = await new Promise((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const address = server.address();
  base = `http://127.0.0.1:${typeof address === 'object' && address ? address.port : 0}`;
  return {
    url: base,
    setWebhookUrl: (url) => {
      webhookUrl = url;
    },
    close: async () => {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      server.closeAllConnections();
    },
  };
}

function publicView(s: FakeSession): Omit<FakeSession, '_title'> {
  const { _title: _t, ...rest } = s;
  return rest;
}

function page(title: string, body: string): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>${esc(title)}</title>
<style>body{font:16px system-ui,sans-serif;background:#eef1f4;margin:0;display:grid;place-items:center;min-height:100vh}
main{background:#fff;border-radius:10px;padding:2rem;width:min(420px,92vw);box-shadow:0 4px 24px #0002}
.note{font-size:.85rem;color:#555;background:#fff8e0;border-radius:6px;padding:.5rem .75rem}
label{display:block;margin:.75rem 0 .25rem}input{width:100%;padding:.55rem;font-size:1rem;box-sizing:border-box}
button{margin-top:1rem;width:100%;padding:.7rem;font-size:1rem;background:#2d4a8a;color:#fff;border:0;border-radius:6px;cursor:pointer}
.amount{font-size:1.8rem;font-weight:600;margin:.25rem 0 1rem}.error{color:#a32020}</style></head>
<body><main><h1>${esc(title)}</h1>${body}</main></body></html>`;
}

function cardPage(s: FakeSession, error: string): string {
  const amount = new Intl.NumberFormat('en-GB', { style: 'currency', currency: s.currency.toUpperCase() }).format(s.amount_total / 100);
  return page(
    'Test payment',
    `<p class="note">Local test payment service. No card is charged and no money moves.</p>
<p>${esc(s._title)}</p><div class="amount" data-amount="${s.amount_total}">${esc(amount)}</div>
${error ? `<p class="error" role="alert">${esc(error)}</p>` : ''}
<form method="post" action="/pay/${esc(s.id)}">
<label for="card">Card number</label><input id="card" name="card" inputmode="numeric" autocomplete="off" value="4242 4242 4242 4242">
<label for="exp">Expiry</label><input id="exp" name="exp" value="12/34">
<button type="submit">Pay ${esc(amount)}</button></form>
${s.cancel_url ? `<p><a href="${esc(s.cancel_url)}">Cancel and go back</a></p>` : ''}`,
  );
}
