import { jsPDF } from 'jspdf';
import { formatMoney, INSTITUTIONAL_PLAN, INVOICE_STATUS } from '../../shared/plans';
import { formatDate } from '../../shared/dates';
import { safeFileName } from '../../shared/slug';
import * as q from '../../db/queries/billing';
import { getGroupName } from '../../db/queries/groups';
import type { Ctx } from '../context';
import { fontBytes, fontFile } from '../figures/fonts';
import { notFound } from '../lib/errors';

/**
 * An invoice of the group as a PDF its owners can file: who was billed, for what, the amount, the
 * period and the state, set in the app's own font (embedded, so any group name prints). The same
 * invoice gives the same bytes (dates and file id come from the invoice).
 */
export async function invoicePdf(ctx: Ctx, groupId: string, invoiceId: string): Promise<{ fileName: string; body: Buffer }> {
  const [inv, groupName, owners] = await Promise.all([q.getInvoice(ctx.db, groupId, invoiceId), getGroupName(ctx.db, groupId), q.listOwners(ctx.db, groupId)]);
  if (!inv) throw notFound('Invoice');
  const doc = new jsPDF({ unit: 'pt', format: 'a4', compress: true });
  const font = fontFile('sans');
  doc.addFileToVFS(font.fileName, fontBytes('sans').toString('base64'));
  doc.addFont(font.fileName, font.family, 'normal');
  doc.setFont(font.family, 'normal');
  const issued = inv.paidAt ?? inv.createdAt;
  doc.setCreationDate(inv.createdAt);
  doc.setFileId(Buffer.from(inv.id).toString('hex').padEnd(32, '0').slice(0, 32).toUpperCase());
  doc.setDocumentProperties({ title: `Bandwright invoice ${inv.id}`, subject: `${INSTITUTIONAL_PLAN.name} plan of ${groupName ?? 'a group'}` });
  let y = 72;
  const line = (text: string, size = 11, gap = 18) => {
    doc.setFontSize(size);
    for (const l of doc.splitTextToSize(text, 450) as string[]) {
      doc.text(l, 72, y);
      y += gap;
    }
  };
  line('Bandwright', 20, 30);
  line(`Invoice ${inv.id}`, 14, 26);
  line(`Billed to: ${groupName ?? 'a deleted group'}`);
  if (owners.length) line(`Owners: ${owners.map((o) => `${o.name} <${o.email}>`).join(', ')}`);
  y += 10;
  line(`${INSTITUTIONAL_PLAN.name} plan (${INSTITUTIONAL_PLAN.quotaBytes / 1024 ** 3} GB of storage)`);
  line(`Period: ${formatDate(inv.periodStart, { utc: true })} – ${formatDate(inv.periodEnd, { utc: true })}`);
  line(`Amount: ${formatMoney(inv.amountCents, inv.currency)}`, 14, 24);
  line(`State: ${INVOICE_STATUS[inv.status] ?? inv.status}${inv.paidAt ? `, paid on ${formatDate(inv.paidAt, { utc: true })}` : ''}`);
  line(`Issued on ${formatDate(issued, { utc: true })}`);
  return { fileName: safeFileName(`bandwright-invoice-${inv.id}`, 'pdf', { fallback: 'invoice' }), body: Buffer.from(doc.output('arraybuffer')) };
}
