/**
 * Canonical JSON: object keys sorted (by UTF-16 code unit), no whitespace, values as JSON.stringify
 * writes them after a JSON round trip (undefined dropped, dates as ISO strings, -0 as 0). Two
 * parties that hold the same data get the same text, whatever order a jsonb column or a spread
 * left the keys in, so a hash of it identifies the data (the idea of RFC 8785, JSON
 * Canonicalization Scheme, without its number re-formatting: ECMAScript's shortest round-trip
 * form is what JSON.stringify already writes).
 */
export function canonicalJson(value: unknown): string {
  const text = JSON.stringify(value);
  return text === undefined ? 'null' : write(JSON.parse(text));
}

function write(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(write).join(',')}]`;
  if (v !== null && typeof v === 'object') {
    const o = v as Record<string, unknown>;
    return `{${Object.keys(o)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${write(o[k])}`)
      .join(',')}}`;
  }
  return JSON.stringify(v);
}
