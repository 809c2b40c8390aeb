/**
 * Reads what a generated PDF says, for tests: the page count from the page objects and the text
 * drawn with the standard fonts (pdfkit writes it as hex strings inside Flate-compressed content
 * streams; PDF 32000-1:2008 §7.3.4.3 hex strings, §7.4.4 FlateDecode, §9.4.3 TJ).
 */
import { inflateSync } from 'node:zlib';

/** Pages in the document (objects of /Type /Page, not /Pages). */
export function pdfPageCount(pdf: Buffer): number {
  return (pdf.toString('latin1').match(/\/Type \/Page[^s]/g) ?? []).length;
}

/** The text of every content stream, one line per text-showing operator, in drawing order. */
export function pdfText(pdf: Buffer): string {
  const raw = pdf.toString('latin1');
  const out: string[] = [];
  const re = /stream\r?\n/g;
  let m: RegExpExecArray | null;
  while ((m = re.exec(raw))) {
    const start = m.index + m[0].length;
    const end = raw.indexOf('endstream', start);
    if (end < 0) break;
    let body: string;
    try {
      body = inflateSync(pdf.subarray(start, end)).toString('latin1');
    } catch {
      continue; // not a Flate stream (fonts, images)
    }
    for (const tj of body.matchAll(/\[([^\]]*)\]\s*TJ/g)) {
      const hex = [...tj[1].matchAll(/<([0-9a-fA-F]*)>/g)].map((h) => h[1]).join('');
      out.push(Buffer.from(hex, 'hex').toString('latin1'));
    }
    re.lastIndex = end;
  }
  return out.join('\n');
}
