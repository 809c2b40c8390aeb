/**
 * The PDF basics every report shares: an A4 document that resolves to a Buffer, text spelled for the
 * standard PDF fonts, number formatting, headings and page breaks that keep a block together.
 */
import PDFDocument from 'pdfkit';

/**
 * Lexend (the app's typeface, SIL OFL) embedded as subsets: a viewer draws exactly the glyphs and
 * widths the line breaks were measured with. With the unembedded standard fonts, a viewer without
 * Helvetica-compatible metrics substituted a wider face and lines ran past the margin.
 */
const FONT_FILES = {
  regular: require.resolve('@expo-google-fonts/lexend/400Regular/Lexend_400Regular.ttf'),
  bold: require.resolve('@expo-google-fonts/lexend/600SemiBold/Lexend_600SemiBold.ttf'),
} as const;
export const FONT = { regular: 'Body', bold: 'Body-Bold', mono: 'Courier' } as const;

export type Pdf = PDFKit.PDFDocument;

/** A rectangle on the page, in PDF points (1/72 in), y downwards from the top. */
export interface Box {
  x: number;
  y: number;
  w: number;
  h: number;
}

export const INK = '#1b1b1b';
export const MUTED = '#5a5a5a';
export const RULE = '#c9c9c9';
export const ALERT = '#b3261e';
export const CAUTION_INK = '#7a4b00';
export const MARGIN = 48;

/** A new A4 report; `done` resolves with the bytes after `doc.end()`. */
export function newPdf(info: { title: string; subject?: string }): { doc: Pdf; done: Promise<Buffer> } {
  const doc = new PDFDocument({
    size: 'A4',
    margin: MARGIN,
    bufferPages: true,
    info: { Title: pdfText(info.title), Author: 'Emberlot', ...(info.subject ? { Subject: pdfText(info.subject) } : {}) },
  });
  doc.registerFont(FONT.regular, FONT_FILES.regular);
  doc.registerFont(FONT.bold, FONT_FILES.bold);
  doc.font(FONT.regular);
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  return { doc, done };
}

/** The standard PDF fonts cover WinAnsi only: spell out what they cannot draw. */
export function pdfText(s: string): string {
  return s
    .replace(/[−–]/g, '-')
    .replace(/≤/g, '<=')
    .replace(/≥/g, '>=')
    .replace(/σ/g, 'sigma')
    .replace(/β/g, 'beta')
    .replace(/η/g, 'eta')
    .replace(/θ/g, 'theta')
    .replace(/Δ/g, 'delta ')
    .replace(/≈/g, '~')
    .replace(/χ²/g, 'chi-square')
    .replace(/⁹/g, '^9')
    .replace(/→/g, '->')
    .replace(/…/g, '...')
    .replace(/[‘’]/g, "'")
    .replace(/[“”]/g, '"')
    .replace(/[^\x20-\x7E\u00A0-\u00FF\n]/g, '?');
}

/** A number to `digits` significant figures, '-' when there is none. */
export const fmt = (v: number | null | undefined, digits = 3) =>
  v === null || v === undefined || !Number.isFinite(v) ? '-' : String(+v.toPrecision(digits));

/** A percentage of a fraction (0.05 → "5 %"). */
export const pctText = (f: number | null | undefined, digits = 3) => (f === null || f === undefined ? '-' : `${fmt(f * 100, digits)} %`);

/** One paragraph at the left margin in the current font. */
export function para(doc: Pdf, s: string, opts: PDFKit.Mixins.TextOptions = {}): Pdf {
  return doc.text(pdfText(s), doc.page.margins.left, doc.y, { width: contentWidth(doc), ...opts });
}

export const contentWidth = (doc: Pdf) => doc.page.width - doc.page.margins.left - doc.page.margins.right;
export const pageBottom = (doc: Pdf) => doc.page.height - doc.page.margins.bottom;

/** Starts a new page unless `height` points still fit below the cursor. */
export function keepTogether(doc: Pdf, height: number): void {
  if (doc.y + height > pageBottom(doc)) doc.addPage();
}

/** A section heading (kept with at least `next` points of what follows). */
export function heading(doc: Pdf, s: string, next = 60): void {
  doc.moveDown(0.6);
  keepTogether(doc, 20 + next);
  doc.font(FONT.bold).fontSize(12).fillColor(INK);
  para(doc, s);
  doc.moveDown(0.2).font(FONT.regular).fontSize(9.5).fillColor(INK);
}

/** A label: value line. */
export function field(doc: Pdf, label: string, value: string): void {
  keepTogether(doc, 14);
  const y = doc.y;
  doc.font(FONT.bold).fontSize(9.5).fillColor(MUTED);
  doc.text(pdfText(label), doc.page.margins.left, y, { width: 130 });
  const afterLabel = doc.y;
  doc.font(FONT.regular).fillColor(INK);
  doc.text(pdfText(value || '-'), doc.page.margins.left + 134, y, { width: contentWidth(doc) - 134 });
  doc.y = Math.max(doc.y, afterLabel);
  doc.x = doc.page.margins.left;
}

/** "Page n of m" and a footer line on every page (needs `bufferPages`). */
export function footers(doc: Pdf, text: string): void {
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const bottom = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    doc
      .font(FONT.regular)
      .fontSize(7.5)
      .fillColor(MUTED)
      .text(pdfText(`${text}    Page ${i + 1} of ${range.count}`), doc.page.margins.left, doc.page.height - 30, {
        width: contentWidth(doc),
        align: 'center',
        lineBreak: false,
      });
    doc.page.margins.bottom = bottom;
  }
}

export interface Column {
  header: string;
  width: number;
  align?: 'left' | 'right';
}

/**
 * A table that wraps its cells, repeats its header after a page break and shades alternate rows.
 * `tone(i)` may colour a row's text (failures in red).
 */
export function table(doc: Pdf, columns: readonly Column[], rows: readonly string[][], tone?: (i: number) => string | null): void {
  const left = doc.page.margins.left;
  const pad = 2;
  const fontSize = 8;
  const heightOf = (cells: readonly string[], bold: boolean) => {
    doc.font(bold ? FONT.bold : FONT.regular).fontSize(fontSize);
    return Math.max(...cells.map((c, i) => doc.heightOfString(pdfText(c), { width: columns[i].width - 2 * pad }))) + 2 * pad;
  };
  const draw = (cells: readonly string[], bold: boolean, color: string, shade: boolean) => {
    const h = heightOf(cells, bold);
    if (doc.y + h > pageBottom(doc)) {
      doc.addPage();
      if (!bold)
        draw(
          columns.map((c) => c.header),
          true,
          INK,
          false,
        );
    }
    const y = doc.y;
    if (shade)
      doc
        .save()
        .rect(
          left,
          y,
          columns.reduce((s, c) => s + c.width, 0),
          h,
        )
        .fill('#f2f2f2')
        .restore();
    let x = left;
    doc
      .font(bold ? FONT.bold : FONT.regular)
      .fontSize(fontSize)
      .fillColor(color);
    cells.forEach((c, i) => {
      doc.text(pdfText(c), x + pad, y + pad, { width: columns[i].width - 2 * pad, align: columns[i].align ?? 'left' });
      x += columns[i].width;
    });
    doc.y = y + h;
    if (bold) {
      doc.save().moveTo(left, doc.y).lineTo(x, doc.y).lineWidth(0.6).strokeColor(RULE).stroke().restore();
    }
  };
  keepTogether(
    doc,
    heightOf(
      columns.map((c) => c.header),
      true,
    ) + 16,
  );
  draw(
    columns.map((c) => c.header),
    true,
    INK,
    false,
  );
  rows.forEach((r, i) => draw(r, false, tone?.(i) ?? INK, i % 2 === 1));
  doc.x = left;
  doc.fillColor(INK).font(FONT.regular).fontSize(9.5);
}
