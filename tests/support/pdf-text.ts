/**
 * Reads what a generated PDF says, for tests: the page count from the page objects, and the text
 * of every text-showing operator (PDF 32000-1:2008 §9.4.3 TJ) in drawing order. Embedded fonts
 * are decoded through their ToUnicode CMaps (§9.10.3: bfchar and bfrange), the standard fonts as
 * WinAnsi bytes; content streams are FlateDecode (§7.4.4).
 */
import { inflateSync } from 'node:zlib';

/** Pages in the document (objects of /Type /Page, not /Pages). */
export function pdfPageCount(pdf: Buffer): number {
  return (pdf.toString('latin1').match(/\/Type \/Page[^s]/g) ?? []).length;
}

interface PdfObject {
  dict: string;
  stream: string | null;
}

function objects(pdf: Buffer): Map<number, PdfObject> {
  const raw = pdf.toString('latin1');
  const out = new Map<number, PdfObject>();
  for (const m of raw.matchAll(/(\d+) 0 obj\b/g)) {
    const start = m.index! + m[0].length;
    const end = raw.indexOf('endobj', start);
    const body = raw.slice(start, end);
    const s = /stream\r?\n/.exec(body);
    let stream: string | null = null;
    if (s) {
      const from = start + s.index + s[0].length;
      const to = start + body.lastIndexOf('endstream');
      const bytes = pdf.subarray(from, to);
      try {
        stream = inflateSync(bytes).toString('latin1');
      } catch {
        stream = bytes.toString('latin1');
      }
    }
    out.set(Number(m[1]), { dict: s ? body.slice(0, s.index) : body, stream });
  }
  return out;
}

/** UTF-16BE hex (a ligature is two code units, written "<0066 0069>") → text. */
const hexToString = (hex: string) => String.fromCodePoint(...(hex.replace(/\s+/g, '').match(/.{4}/g) ?? []).map((h) => parseInt(h, 16)));

/** code (hex) → text, from a ToUnicode CMap. */
function toUnicode(cmap: string): Map<string, string> {
  const map = new Map<string, string>();
  for (const block of cmap.matchAll(/beginbfchar([\s\S]*?)endbfchar/g))
    for (const p of block[1].matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F\s]+)>/g)) map.set(p[1].toLowerCase(), hexToString(p[2]));
  for (const block of cmap.matchAll(/beginbfrange([\s\S]*?)endbfrange/g)) {
    for (const r of block[1].matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>\s*(\[[^\]]*\]|<[0-9a-fA-F]+>)/g)) {
      const lo = parseInt(r[1], 16);
      const hi = parseInt(r[2], 16);
      const width = r[1].length;
      const dst = r[3].startsWith('[') ? [...r[3].matchAll(/<([0-9a-fA-F\s]+)>/g)].map((x) => x[1]) : null;
      for (let c = lo; c <= hi; c++) {
        const key = c.toString(16).padStart(width, '0');
        if (dst) map.set(key, hexToString(dst[c - lo] ?? ''));
        else map.set(key, String.fromCodePoint(parseInt(r[3].slice(1, -1), 16) + (c - lo)));
      }
    }
  }
  return map;
}

/** The text of every content stream, one line per text-showing operator, in drawing order. */
export function pdfText(pdf: Buffer): string {
  const objs = objects(pdf);
  // Font resource names (pdfkit names them uniquely per document) → their ToUnicode maps.
  const fonts = new Map<string, Map<string, string> | null>();
  for (const o of objs.values()) {
    for (const f of o.dict.matchAll(/\/(F\d+) (\d+) 0 R/g)) {
      if (fonts.has(f[1])) continue;
      const font = objs.get(Number(f[2]));
      const tu = font && /\/ToUnicode (\d+) 0 R/.exec(font.dict);
      fonts.set(f[1], tu ? toUnicode(objs.get(Number(tu[1]))?.stream ?? '') : null);
    }
  }
  const out: string[] = [];
  for (const o of objs.values()) {
    if (!o.stream || !/\bTJ\b/.test(o.stream)) continue;
    let font: Map<string, string> | null = null;
    for (const op of o.stream.matchAll(/\/(F\d+) [\d.]+ Tf|\[([^\]]*)\]\s*TJ/g)) {
      if (op[1]) {
        font = fonts.get(op[1]) ?? null;
        continue;
      }
      const hex = [...op[2].matchAll(/<([0-9a-fA-F]*)>/g)].map((h) => h[1]).join('');
      if (!font) out.push(Buffer.from(hex, 'hex').toString('latin1'));
      else out.push((hex.match(/.{4}/g) ?? []).map((c) => font!.get(c.toLowerCase()) ?? '?').join(''));
    }
  }
  return out.join('\n');
}
