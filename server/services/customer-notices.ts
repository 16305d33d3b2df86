import type { Db } from '../db/client';
import type { SessionUser } from '../../shared/auth';
import type { OutboxMessage } from '../../shared/billing';
import { conflict } from '../http-error';
import type { BillingRuntime } from '../billing-runtime';
import { loadMailContext, readyForCollectionMail } from '../mail/messages';
import { lockJob, recordJobEvent } from './billing-job-status';
import { deliverEmails, getOutboxMessage, queueEmail } from './outbox';

/**
 * Tells the customer the unit is ready to collect. Kept as its own step (not a side effect of the
 * stage move) so the desk decides when the message goes, e.g. after the invoice is ready too.
 */
export async function sendReadyForCollection(db: Db, runtime: BillingRuntime, user: SessionUser, jobId: number): Promise<OutboxMessage> {
  const emailId = await db.transaction(async (tx) => {
    const job = await lockJob(tx, user.shop.id, jobId);
    if (job.status !== 'ready') throw conflict('The job is not at “Ready” yet');
    await recordJobEvent(tx, job, 'ready_notice', 'Customer told the unit is ready to collect', user.id);
    const ctx = await loadMailContext(tx, user.shop.id, job.id, runtime.publicUrl());
    return queueEmail(tx, { shopId: user.shop.id, kind: 'ready_for_collection', jobId: job.id, createdBy: user.id, mail: readyForCollectionMail(ctx) });
  });
  await deliverEmails(db, runtime.mailer, [emailId]);
  return getOutboxMessage(db, user.shop.id, emailId);
}
