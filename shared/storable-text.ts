/**
 * Text PostgreSQL can store: a NUL character (text and jsonb cannot hold it) or a lone UTF-16
 * surrogate (not valid unicode; jsonb refuses its escape) fails the statement that carries it.
 * The API refuses such input at its edge (server/http/route.ts); text from rigs is not refused but
 * made storable where it is parsed (shared/mqtt/payloads.ts), so a rig's ack or status always lands.
 */
export const UNSTORABLE_TEXT = /\u0000|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;
const UNSTORABLE_TEXT_ALL = new RegExp(UNSTORABLE_TEXT.source, 'g');

/** What stands in for each unstorable character: U+FFFD, the unicode replacement character. */
export const REPLACEMENT_CHARACTER = '\uFFFD';

export const isStorableText = (s: string): boolean => !UNSTORABLE_TEXT.test(s);

/** The text with every NUL and lone surrogate replaced by U+FFFD (the same string when there is none). */
export function storableText(s: string): string {
  return UNSTORABLE_TEXT.test(s) ? s.replace(UNSTORABLE_TEXT_ALL, REPLACEMENT_CHARACTER) : s;
}
