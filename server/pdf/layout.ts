import PDFDocument from 'pdfkit';
import { FONTS, pdfText } from './fonts';

export type Doc = PDFKit.PDFDocument;

/** Print colours: dark ink on white, one green accent, and red/green only for before/after. */
export const INK = {
  text: '#221f1c',
  muted: '#6f695e',
  rule: '#c9c4b9',
  tint: '#f3f1ec',
  accent: '#1f534b',
  before: '#b3412f',
  after: '#2f7d4f',
  caution: '#9a6a00',
  cautionTint: '#fdf6e3',
} as const;

export const MARGIN = 48;

export function newDoc(info: { title: string; author: string; subject: string }): Doc {
  const doc = new PDFDocument({
    size: 'A4',
    margins: { top: MARGIN, bottom: MARGIN + 18, left: MARGIN, right: MARGIN },
    bufferPages: true,
    info: { Title: pdfText(info.title), Author: pdfText(info.author), Subject: pdfText(info.subject), Creator: 'Quietpath' },
    compress: true,
  });
  doc.registerFont('Text', FONTS.text);
  doc.registerFont('Bold', FONTS.textBold);
  doc.registerFont('Italic', FONTS.textItalic);
  doc.registerFont('Figures', FONTS.figures);
  doc.font('Text').fontSize(10).fillColor(INK.text);
  return doc;
}

export function toBuffer(doc: Doc): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
    doc.end();
  });
}

export const contentWidth = (doc: Doc) => doc.page.width - doc.page.margins.left - doc.page.margins.right;
const bottom = (doc: Doc) => doc.page.height - doc.page.margins.bottom;

/** Starts a new page when fewer than `height` points are left. */
export function ensureSpace(doc: Doc, height: number): void {
  if (doc.y + height > bottom(doc)) doc.addPage();
}

export function heading(doc: Doc, text: string, size = 13): void {
  ensureSpace(doc, size * 3);
  doc.moveDown(0.6);
  doc.font('Bold').fontSize(size).fillColor(INK.accent).text(pdfText(text), doc.page.margins.left, doc.y, { width: contentWidth(doc) });
  doc.moveDown(0.25);
  doc.font('Text').fontSize(10).fillColor(INK.text);
}

export function paragraph(doc: Doc, text: string, opts: { size?: number; color?: string; font?: string } = {}): void {
  doc
    .font(opts.font ?? 'Text')
    .fontSize(opts.size ?? 10)
    .fillColor(opts.color ?? INK.text)
    .text(pdfText(text), doc.page.margins.left, doc.y, { width: contentWidth(doc), lineGap: 1.5 });
  doc.font('Text').fontSize(10).fillColor(INK.text);
}

/** Label/value pairs in two columns, e.g. the job and unit block at the top of a report. */
export function facts(doc: Doc, pairs: [string, string][], columns = 2): void {
  const width = contentWidth(doc) / columns;
  const labelW = 92;
  for (let i = 0; i < pairs.length; i += columns) {
    const row = pairs.slice(i, i + columns);
    const heights = row.map(([, v]) => doc.font('Text').fontSize(10).heightOfString(pdfText(v || '—'), { width: width - labelW - 8 }));
    const h = Math.max(14, ...heights);
    ensureSpace(doc, h + 4);
    const y = doc.y;
    row.forEach(([label, value], j) => {
      const x = doc.page.margins.left + j * width;
      doc.font('Text').fontSize(8.5).fillColor(INK.muted).text(pdfText(label).toUpperCase(), x, y + 1.5, { width: labelW - 4 });
      doc.font('Text').fontSize(10).fillColor(INK.text).text(pdfText(value || '—'), x + labelW, y, { width: width - labelW - 8 });
    });
    doc.y = y + h + 4;
  }
  doc.x = doc.page.margins.left;
}

export interface Column {
  header: string;
  width: number;
  align?: 'left' | 'right' | 'center';
  /** Figures in the monospaced font, so digits line up. */
  figures?: boolean;
}

export interface TableOptions {
  /** Per row, an optional text colour for one cell: [columnIndex, colour]. */
  cellColor?: (row: number, col: number) => string | undefined;
  fontSize?: number;
}

/** A ruled table that breaks across pages and repeats its header. */
export function table(doc: Doc, columns: Column[], rows: string[][], opts: TableOptions = {}): void {
  const size = opts.fontSize ?? 9;
  const pad = 4;
  const left = doc.page.margins.left;
  const drawHeader = () => {
    const y = doc.y;
    doc.rect(left, y, columns.reduce((s, c) => s + c.width, 0), size + 2 * pad + 2).fill(INK.tint);
    let x = left;
    for (const c of columns) {
      doc.font('Bold').fontSize(size).fillColor(INK.text).text(pdfText(c.header), x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
      x += c.width;
    }
    doc.y = y + size + 2 * pad + 2;
  };
  const rowHeight = (row: string[]) =>
    Math.max(
      ...row.map((cell, i) =>
        doc.font(columns[i]!.figures ? 'Figures' : 'Text').fontSize(columns[i]!.figures ? size - 0.5 : size).heightOfString(pdfText(cell || ' '), { width: columns[i]!.width - 2 * pad }),
      ),
    ) + 2 * pad;
  // Never leave a header alone at the foot of a page: it needs its first row with it.
  ensureSpace(doc, size + 2 * pad + 2 + (rows[0] ? rowHeight(rows[0]) : 0));
  drawHeader();
  rows.forEach((row, r) => {
    const h = rowHeight(row);
    if (doc.y + h > bottom(doc)) {
      doc.addPage();
      drawHeader();
    }
    const y = doc.y;
    let x = left;
    row.forEach((cell, i) => {
      const c = columns[i]!;
      doc
        .font(c.figures ? 'Figures' : 'Text')
        .fontSize(c.figures ? size - 0.5 : size)
        .fillColor(opts.cellColor?.(r, i) ?? INK.text)
        .text(pdfText(cell), x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
      x += c.width;
    });
    doc
      .moveTo(left, y + h)
      .lineTo(x, y + h)
      .lineWidth(0.4)
      .strokeColor(INK.rule)
      .stroke();
    doc.y = y + h;
  });
  doc.x = left;
  doc.font('Text').fontSize(10).fillColor(INK.text);
  doc.moveDown(0.5);
}

/** A tinted box with a bold title, for cautions and notes the reader must not miss. */
export function noteBox(doc: Doc, title: string, lines: string[], tone: 'caution' | 'plain' = 'plain'): void {
  const width = contentWidth(doc);
  const body = lines.map((l) => `• ${l}`).join('\n');
  doc.font('Text').fontSize(9);
  const h = doc.heightOfString(pdfText(body), { width: width - 24, lineGap: 1.5 }) + 34;
  ensureSpace(doc, h + 6);
  const x = doc.page.margins.left;
  const y = doc.y;
  doc.rect(x, y, width, h).fill(tone === 'caution' ? INK.cautionTint : INK.tint);
  doc.rect(x, y, 3, h).fill(tone === 'caution' ? INK.caution : INK.accent);
  doc.font('Bold').fontSize(10).fillColor(INK.text).text(pdfText(title), x + 12, y + 8, { width: width - 24 });
  doc.font('Text').fontSize(9).text(pdfText(body), x + 12, y + 24, { width: width - 24, lineGap: 1.5 });
  doc.y = y + h + 6;
  doc.x = x;
  doc.font('Text').fontSize(10);
}

/** Writes "left … page n of N" at the foot of every page; call once, just before toBuffer. */
export function footers(doc: Doc, left: string): void {
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const savedBottom = doc.page.margins.bottom;
    doc.page.margins.bottom = 0; // writing below the margin must not open a new page
    const y = doc.page.height - MARGIN + 4;
    doc
      .moveTo(MARGIN, y - 6)
      .lineTo(doc.page.width - MARGIN, y - 6)
      .lineWidth(0.4)
      .strokeColor(INK.rule)
      .stroke();
    doc.font('Text').fontSize(8).fillColor(INK.muted);
    doc.text(pdfText(left), MARGIN, y, { width: contentWidth(doc) - 80, lineBreak: false });
    doc.text(`page ${i - range.start + 1} of ${range.count}`, doc.page.width - MARGIN - 80, y, { width: 80, align: 'right', lineBreak: false });
    doc.page.margins.bottom = savedBottom;
  }
}
