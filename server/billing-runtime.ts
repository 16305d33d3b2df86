/**
 * The outside services billing talks to: SMTP for e-mail and the payment provider's API. When the
 * configuration names none, the local stand-ins are started on free 127.0.0.1 ports and the real
 * clients (nodemailer, the official stripe SDK) are pointed at them, so the same code paths run
 * in development, in tests and in production.
 */
import { randomBytes } from 'node:crypto';
import Stripe from 'stripe';
import type { Config } from './config';
import type { Db } from './db/client';
import { startFakeSmtp, type FakeSmtp } from './fakes/smtp-mailbox';
import { startFakePaymentApi, type FakePaymentApi } from './fakes/payment-api';
import { createMailer, type Mailer } from './mail/transport';

export interface BillingRuntime {
  mailer: Mailer;
  stripe: Stripe;
  webhookSecret: string;
  /** Base URL customers reach the app at (links in e-mails, payment return pages). */
  publicUrl(): string;
  /** Set once the HTTP server listens: the webhook target and the default public URL. */
  attach(serverUrl: string): void;
  /** The local stand-ins' addresses, or null when real services are configured. */
  local: { smtpUrl: string | null; paymentApiUrl: string | null };
  close(): Promise<void>;
}

function stripeClient(key: string, apiBase: string | undefined): Stripe {
  const options: Stripe.StripeConfig = { maxNetworkRetries: 1, timeout: 20_000, telemetry: false };
  if (apiBase) {
    const u = new URL(apiBase);
    options.protocol = u.protocol === 'http:' ? 'http' : 'https';
    options.host = u.hostname;
    options.port = u.port || (u.protocol === 'http:' ? 80 : 443);
  }
  return new Stripe(key, options);
}

export async function startBilling(config: Config, db: Db): Promise<BillingRuntime> {
  if (config.STRIPE_SECRET_KEY && !config.STRIPE_WEBHOOK_SECRET) {
    throw new Error('STRIPE_WEBHOOK_SECRET is needed with STRIPE_SECRET_KEY, or payment webhooks cannot be verified');
  }
  let fakeSmtp: FakeSmtp | null = null;
  let fakePay: FakePaymentApi | null = null;
  let serverUrl = '';
  try {
    if (!config.SMTP_URL) fakeSmtp = await startFakeSmtp(db);
    const smtpUrl = config.SMTP_URL ?? fakeSmtp!.url;

    let key = config.STRIPE_SECRET_KEY;
    const webhookSecret = config.STRIPE_WEBHOOK_SECRET ?? `whsec_local_${randomBytes(24).toString('hex')}`;
    let apiBase = config.STRIPE_API_BASE;
    if (!key) {
      key = `sk_test_local_${randomBytes(24).toString('hex')}`;
      fakePay = await startFakePaymentApi({ secretKey: key, webhookSecret, db });
      apiBase = fakePay.url;
    }
    const mailer = createMailer(smtpUrl);
    const smtp = fakeSmtp;
    const pay = fakePay;
    return {
      mailer,
      stripe: stripeClient(key, apiBase),
      webhookSecret,
      publicUrl: () => config.PUBLIC_URL ?? serverUrl,
      attach(url) {
        serverUrl = url;
        pay?.setWebhookUrl(`${url}/api/payments/webhook`);
      },
      local: { smtpUrl: smtp?.url ?? null, paymentApiUrl: pay?.url ?? null },
      async close() {
        mailer.close();
        await Promise.all([smtp?.close(), pay?.close()]);
      },
    };
  } catch (err) {
    await Promise.all([fakeSmtp?.close(), fakePay?.close()]);
    throw err;
  }
}
