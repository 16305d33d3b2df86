import { and, eq } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { customers, shops } from '../db/schema/index';
import type { Invoice } from '../../shared/billing';
import { formatMoney, formatQuantity, formatRateBp } from '../../shared/money';
import { notFound } from '../http-error';
import { loadInvoices } from '../services/invoices';
import { pdfText } from './fonts';
import { INK, MARGIN, contentWidth, ensureSpace, footers, newDoc, paragraph, table, toBuffer, type Doc } from './layout';

export interface InvoiceParty {
  name: string;
  address: string;
  email: string;
}

const day = (iso: string | null) => (iso ? iso.slice(0, 10) : '—');
const KIND_TEXT = { labour: 'Labour', part: 'Part', other: 'Other' } as const;

function stampBox(doc: Doc, text: string, color: string) {
  const w = 150;
  const x = MARGIN + contentWidth(doc) - w;
  const y = 118;
  doc.save();
  doc.rotate(-8, { origin: [x + w / 2, y + 18] });
  doc.rect(x, y, w, 36).lineWidth(2).strokeColor(color).stroke();
  doc.font('Bold').fontSize(18).fillColor(color).text(text, x, y + 8, { width: w, align: 'center' });
  doc.restore();
}

export function drawInvoice(inv: Invoice, shop: InvoiceParty, customer: InvoiceParty): Promise<Buffer> {
  const doc = newDoc({ title: `Invoice ${inv.reference}`, author: shop.name, subject: `Job ${inv.jobReference}` });
  const w = contentWidth(doc);
  const money = (m: number) => formatMoney(m, inv.currency);

  doc.font('Bold').fontSize(18).fillColor(INK.accent).text(pdfText(shop.name), MARGIN, MARGIN, { width: w * 0.6 });
  doc.font('Text').fontSize(9).fillColor(INK.muted).text(pdfText([shop.address, shop.email].filter(Boolean).join('\n')), MARGIN, doc.y + 2, { width: w * 0.6 });
  doc.font('Bold').fontSize(22).fillColor(INK.text).text(inv.status === 'draft' ? 'Draft invoice' : 'Invoice', MARGIN + w * 0.55, MARGIN, { width: w * 0.45, align: 'right' });
  doc.font('Figures').fontSize(12).text(inv.reference, MARGIN + w * 0.55, MARGIN + 28, { width: w * 0.45, align: 'right' });
  if (inv.status === 'paid') stampBox(doc, `PAID ${day(inv.paidAt)}`, INK.after);
  if (inv.status === 'void') stampBox(doc, 'VOID', INK.before);

  doc.y = 170;
  const colW = w / 2;
  const top = doc.y;
  doc.font('Text').fontSize(8.5).fillColor(INK.muted).text('BILL TO', MARGIN, top);
  doc.font('Bold').fontSize(10.5).fillColor(INK.text).text(pdfText(customer.name), MARGIN, top + 12, { width: colW - 10 });
  doc.font('Text').fontSize(9.5).text(pdfText([customer.address, customer.email].filter(Boolean).join('\n')), { width: colW - 10 });
  const leftBottom = doc.y;
  const details: [string, string][] = [
    ['Invoice date', day(inv.sentAt ?? inv.createdAt)],
    ['Job', `${inv.jobReference} · ${inv.unitLabel}`],
    ['Status', inv.status === 'sent' ? 'Due on receipt' : inv.status[0]!.toUpperCase() + inv.status.slice(1)],
    ['Currency', inv.currency],
  ];
  let y = top;
  for (const [label, value] of details) {
    doc.font('Text').fontSize(8.5).fillColor(INK.muted).text(label.toUpperCase(), MARGIN + colW, y + 1, { width: 80 });
    doc.font('Text').fontSize(9.5).fillColor(INK.text).text(pdfText(value), MARGIN + colW + 84, y, { width: colW - 84 });
    y = Math.max(doc.y, y + 14);
  }
  doc.y = Math.max(leftBottom, y) + 18;
  doc.x = MARGIN;

  table(
    doc,
    [
      { header: 'Description', width: w * 0.5 },
      { header: 'Kind', width: w * 0.1 },
      { header: 'Qty', width: w * 0.1, align: 'right', figures: true },
      { header: 'Unit price', width: w * 0.15, align: 'right', figures: true },
      { header: 'Amount', width: w * 0.15, align: 'right', figures: true },
    ],
    inv.lines.map((l) => [l.description, KIND_TEXT[l.kind], formatQuantity(l.quantityMilli), money(l.unitPriceMinor), money(l.amountMinor)]),
    { fontSize: 9 },
  );

  ensureSpace(doc, 90);
  const totals: [string, string, boolean][] = [
    ['Subtotal', money(inv.subtotalMinor), false],
    [`Tax ${formatRateBp(inv.taxRateBp)}`, money(inv.taxMinor), false],
    ['Total', money(inv.totalMinor), true],
  ];
  for (const [label, value, strong] of totals) {
    const ty = doc.y;
    doc.font(strong ? 'Bold' : 'Text').fontSize(strong ? 12 : 10).fillColor(INK.text).text(label, MARGIN + w * 0.5, ty, { width: w * 0.3, align: 'right' });
    doc.font('Figures').fontSize(strong ? 11.5 : 9.5).text(value, MARGIN + w * 0.8, ty + (strong ? 1 : 0.5), { width: w * 0.2 - 4, align: 'right' });
    doc.y = ty + (strong ? 20 : 15);
  }
  for (const p of inv.payments) {
    paragraph(doc, `Paid ${money(p.amountMinor)} on ${day(p.receivedAt)} (${p.method.replace('_', ' ')}${p.providerRef ? `, ref. ${p.providerRef}` : ''}).`, { size: 9, color: INK.after });
  }
  if (inv.status === 'void' && inv.voidReason) paragraph(doc, `Void: ${inv.voidReason}`, { size: 9, color: INK.before });
  doc.moveDown(1);
  if (inv.notes) {
    paragraph(doc, inv.notes, { size: 9.5 });
    doc.moveDown(0.6);
  }
  paragraph(
    doc,
    `The repair evidence report for job ${inv.jobReference} (measurements before and after the repair) accompanies this invoice. ` +
      (inv.status === 'sent' ? 'You can pay online from your repair page, or at the counter when you collect the unit.' : ''),
    { size: 9, color: INK.muted },
  );
  doc.moveDown(0.4);
  paragraph(
    doc,
    `Amounts in ${inv.currency}. Each line is quantity × unit price rounded to the nearest minor unit (halves up); tax is charged once on the subtotal and rounded the same way.`,
    { size: 8, color: INK.muted },
  );
  footers(doc, `${shop.name} · invoice ${inv.reference} · job ${inv.jobReference}`);
  return toBuffer(doc);
}

export async function renderInvoicePdf(db: DbOrTx, shopId: number, invoiceId: number): Promise<Buffer> {
  const [inv] = await loadInvoices(db, shopId, [invoiceId]);
  if (!inv) throw notFound('Invoice');
  const [shop] = await db.select({ name: shops.name, address: shops.address, email: shops.email }).from(shops).where(eq(shops.id, shopId));
  const [customer] = await db
    .select({ name: customers.name, address: customers.address, email: customers.email })
    .from(customers)
    .where(and(eq(customers.shopId, shopId), eq(customers.id, inv.customerId)));
  return drawInvoice(inv, shop!, customer!);
}
