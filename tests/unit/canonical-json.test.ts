/**
 * Canonical JSON (shared/canonical-json.ts) and the SHA-256 the signatures and the audit chain use.
 */
import { sha256Hex, entryHash, checkChain } from '../../server/modules/audit/audit-chain';
import { canonicalJson } from '../../shared/canonical-json';

describe('canonical JSON', () => {
  it('sorts keys at every depth, drops undefined, keeps array order', () => {
    expect(canonicalJson({ b: 1, a: { d: [3, { z: 1, y: 2 }], c: undefined } })).toBe('{"a":{"d":[3,{"y":2,"z":1}]},"b":1}');
    // Dates as ISO strings, -0 as 0 (what JSON.stringify writes).
    expect(canonicalJson({ at: new Date('2026-03-01T00:00:00Z'), z: -0 })).toBe('{"at":"2026-03-01T00:00:00.000Z","z":0}');
  });

  it('gives the same text whatever order the keys came in (a jsonb read-back reorders them)', () => {
    expect(canonicalJson({ x: 1, y: { q: 'a', p: 'b' } })).toBe(canonicalJson(JSON.parse('{"y":{"p":"b","q":"a"},"x":1}')));
  });
});

describe('SHA-256', () => {
  it('matches the published test vectors [pub: FIPS 180-2, appendix B.1 and B.2 ("abc", the 448-bit message), digests from memory]', () => {
    expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(sha256Hex('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq')).toBe(
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    );
  });
});

describe('the audit chain check', () => {
  const entry = (i: number, prevHash: string | null) => ({
    at: new Date(Date.UTC(2026, 2, 1, 0, i)),
    actorId: null,
    actor: 'system',
    action: 'test',
    entity: 'test',
    entityId: String(i),
    reason: null,
    details: { i },
    prevHash,
  });
  const chain = () => {
    const rows: Array<ReturnType<typeof entry> & { id: string; hash: string }> = [];
    let prev: string | null = null;
    for (let i = 1; i <= 4; i++) {
      const e = entry(i, prev);
      const hash = entryHash(e);
      rows.push({ ...e, id: String(i), hash });
      prev = hash;
    }
    return rows;
  };

  it('passes a clean chain and names the first changed, removed or reordered entry', () => {
    expect(checkChain(chain(), null).problem).toBeNull();
    const edited = chain();
    edited[1] = { ...edited[1], details: { i: 99 } };
    expect(checkChain(edited, null).problem?.id).toBe('2');
    const removed = chain().filter((r) => r.id !== '3');
    expect(checkChain(removed, null).problem?.id).toBe('4');
    const swapped = chain();
    [swapped[1], swapped[2]] = [swapped[2], swapped[1]];
    expect(checkChain(swapped, null).problem?.id).toBe('3');
  });
});
