/**
 * The source tags of the plan templates in words for people. The templates tag each number with
 * where it comes from ([pub: …] published, [practice] common practice, [memory: …] recalled and not
 * checked against the text, [Emberlot choice …] ours); a screen shows those as plain sentences,
 * with a recalled value set apart as a note to check.
 */

export type SourceKind = 'text' | 'published' | 'practice' | 'recalled' | 'ours';

export interface SourcePart {
  kind: SourceKind;
  text: string;
}

/** What a recalled value says to the reader (the tag's own "confirm …" words are replaced by it). */
export const RECALLED_NOTE = "Recalled, confirm against the standard's current revision";

const TAG = /\[([^\]]*)\]/g;

function tagPart(inner: string): SourcePart {
  const m = /^(pub|memory)\s*:\s*(.*)$/s.exec(inner.trim());
  if (m) {
    if (m[1] === 'pub') return { kind: 'published', text: `Published: ${m[2].trim()}` };
    // "JESD22-A101, 85 ± 2 °C — confirm" / "…; confirm against the current revision" → the recalled content alone.
    const content = m[2]
      .replace(/\s*[—;,-]?\s*confirm\b.*$/i, '')
      .replace(/\s*[—;,]?\s*wording not checked.*$/i, '')
      .trim();
    return { kind: 'recalled', text: content ? `${RECALLED_NOTE}: ${content}` : RECALLED_NOTE };
  }
  if (/^practice$/i.test(inner.trim())) return { kind: 'practice', text: 'Common practice' };
  if (/^Emberlot\b/i.test(inner.trim())) return { kind: 'ours', text: 'Our choice, not from a standard' };
  return { kind: 'text', text: inner };
}

/** "[pub: JESD22-A101] [memory: 85 ± 2 °C — confirm]" → a published part and a recalled part. */
export function sourceParts(source: string): SourcePart[] {
  const parts: SourcePart[] = [];
  let at = 0;
  for (const m of source.matchAll(TAG)) {
    const before = source.slice(at, m.index).trim();
    if (before) parts.push({ kind: 'text', text: before });
    parts.push(tagPart(m[1]!));
    at = m.index! + m[0].length;
  }
  const rest = source.slice(at).trim();
  if (rest) parts.push({ kind: 'text', text: rest });
  return parts;
}

/** The same as one plain sentence (a plan's notes, a PDF line): tags in words, no brackets. */
export function sourceText(source: string): string {
  const parts = sourceParts(source);
  let out = '';
  parts.forEach((p, i) => {
    if (i > 0) out += p.kind === 'text' || parts[i - 1]!.kind === 'text' ? ' ' : '; ';
    out += p.text;
  });
  return out.replace(/\s+\)/g, ')');
}
