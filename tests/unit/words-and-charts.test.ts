/**
 * The pure parts of the screens' words and charts: counts with the right noun, the one date style,
 * validator text in plain words, template sources in words, which sockets a rig chart shows and
 * the chart axes' zero and end padding. Plus a scan that fails on a new stray date format.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { z } from 'zod';
import { plainFieldMessage, readApiError } from '../../shared/domain/api-error';
import { countOf, formatLocal, formatLocalCompact, formatLocalDate, formatLocalTime, nounFor } from '../../shared/domain/format';
import { hottestByMean } from '../../shared/domain/hottest-sockets';
import { RECALLED_NOTE, sourceParts, sourceText } from '../../shared/domain/source-words';
import { SOURCES } from '../../shared/plan-templates';
import { domainWithZero, endPadding } from '../../components/charts/axis';

describe('countOf / nounFor: one helper for every count (English plural, common practice)', () => {
  it.each([
    [0, 'row', undefined, '0 rows'],
    [1, 'row', undefined, '1 row'],
    [2, 'row', undefined, '2 rows'],
    [1, 'person', 'people', '1 person'],
    [3, 'person', 'people', '3 people'],
    [15000, 'reading', undefined, '15,000 readings'],
  ])('%d %s → %s', (n, one, many, text) => {
    expect(countOf(n, one, many)).toBe(text);
  });
  it('the noun alone follows the count', () => {
    expect([nounFor(1, 'reading'), nounFor(4, 'reading')]).toEqual(['reading', 'readings']);
  });
});

describe('one date style: year first, 24-hour clock (ISO 8601 layout), local on screens', () => {
  const at = new Date(2026, 2, 2, 8, 5, 9); // local 2026-03-02 08:05:09
  it('date, time, date and time', () => {
    expect(formatLocalDate(at)).toBe('2026-03-02');
    expect(formatLocalTime(at)).toBe('08:05');
    expect(formatLocalTime(at, true)).toBe('08:05:09');
    expect(formatLocal(at)).toBe('2026-03-02 08:05');
  });
  it('compact: the time alone on the same day, else the full date and time (never a month name)', () => {
    expect(formatLocalCompact(at, new Date(2026, 2, 2, 23, 59))).toBe('08:05');
    expect(formatLocalCompact(at, new Date(2026, 2, 3, 0, 0))).toBe('2026-03-02 08:05');
  });

  it('no screen formats a date by itself (every date goes through shared/domain/format.ts)', () => {
    const root = path.resolve(__dirname, '../..');
    const stray =
      /toLocale(Date|Time)String|Intl\.DateTimeFormat|\.get(UTC)?(FullYear|Month|Date|Day|Hours|Minutes|Seconds)\(\)|toDateString\(|toUTCString\(|toISOString\(\)\.slice/;
    const found: string[] = [];
    const walk = (dir: string) => {
      for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
        const p = path.join(dir, e.name);
        if (e.isDirectory()) walk(p);
        else if (/\.(ts|tsx)$/.test(e.name))
          fs.readFileSync(p, 'utf8')
            .split('\n')
            .forEach((line, i) => {
              if (stray.test(line)) found.push(`${path.relative(root, p)}:${i + 1}: ${line.trim()}`);
            });
      }
    };
    walk(path.join(root, 'components'));
    walk(path.join(root, 'app'));
    // Known and named: checking a typed date's parts (not a display format).
    const allowed = ['components/schedule/timeline-scale.ts:'];
    expect(found.filter((f) => !allowed.some((a) => f.startsWith(a)))).toEqual([]);
  });
});

describe('plainFieldMessage: validator defaults in words for a form', () => {
  // The inputs are zod 4's own English messages, produced here by zod itself (the installed version).
  const messageOf = (schema: z.ZodType, value: unknown) => {
    const r = schema.safeParse(value);
    if (r.success) throw new Error('expected a refusal');
    return r.error.issues[0]!.message;
  };
  it.each([
    ['Enter a number', z.number(), undefined],
    ['Enter a number', z.number(), 'abc'],
    ['Enter a number', z.number(), Number.NaN],
    ['Fill this in', z.string(), undefined],
    ['Enter at least 1', z.number().min(1), 0],
    ['Enter at most 250', z.number().max(250), 300],
    ['Enter more than 0', z.number().positive(), 0],
    ['Use at least 3 characters', z.string().min(3), 'ab'],
    ['Use at most 5 characters', z.string().max(5), 'abcdefg'],
    ['Choose one of a, b', z.enum(['a', 'b']), 'c'],
    ['Remove what is not expected here: extra', z.object({ a: z.number() }).strict(), { a: 1, extra: 1 }],
    ['Choose yes or no', z.boolean(), undefined],
  ])('→ %s', (plain, schema, value) => {
    const raw = messageOf(schema as z.ZodType, value);
    expect(raw).not.toBe(plain);
    expect(plainFieldMessage(raw)).toBe(plain);
  });
  it('a message a schema wrote itself passes unchanged', () => {
    expect(plainFieldMessage('Enter a part number')).toBe('Enter a part number');
  });
  it('readApiError hands the app plain field messages', () => {
    const body = {
      error: { code: 'bad_request', message: 'x', fields: { coolUnderBiasToC: ['Invalid input: expected number, received undefined'] } },
    };
    expect(readApiError(body)?.fields).toEqual({ coolUnderBiasToC: ['Enter a number'] });
  });
});

describe('template sources in words', () => {
  it('a recalled value becomes a note to check, without the tag', () => {
    const parts = sourceParts(SOURCES.aecSampleMemory);
    expect(parts).toEqual([{ kind: 'recalled', text: `${RECALLED_NOTE}: AEC-Q101 test table — 3 lots × 77, accept 0` }]);
  });
  it('published, common practice and our own choice in words', () => {
    expect(sourceParts(`${SOURCES.thb} [memory: 85 ± 2 °C — confirm]`)).toEqual([
      { kind: 'published', text: 'Published: JESD22-A101' },
      { kind: 'recalled', text: `${RECALLED_NOTE}: 85 ± 2 °C` },
    ]);
    expect(sourceText(`${SOURCES.ea} (use temperature: ${SOURCES.ours})`)).toBe(
      'Common practice (use temperature: Our choice, not from a standard)',
    );
  });
  it('no template text a screen shows keeps a bracketed tag', () => {
    for (const s of Object.values(SOURCES)) expect(sourceText(s)).not.toMatch(/\[|\]|memory:/);
  });
});

describe('hottestByMean: the rig chart’s default sockets', () => {
  it('highest mean over the window first, ties to the lower socket, shown in socket order', () => {
    const rows = [
      { socket: 4, meanC: 151.2 },
      { socket: 1, meanC: 153.0 },
      { socket: 7, meanC: 153.0 },
      { socket: 2, meanC: 152.9 },
      { socket: 3, meanC: null },
    ];
    expect(hottestByMean(rows)).toEqual([1, 2, 7]);
    // The order rows arrive in does not matter: the same window always gives the same sockets.
    expect(hottestByMean([...rows].reverse())).toEqual([1, 2, 7]);
  });
  it('means within the same degree compare equal, so tenths that wander between loads change nothing', () => {
    const load1 = [0, 1, 2, 3].map((socket) => ({ socket, meanC: [150.2, 150.4, 149.9, 150.1][socket]! }));
    const load2 = [0, 1, 2, 3].map((socket) => ({ socket, meanC: [150.1, 149.8, 150.3, 150.2][socket]! }));
    expect(hottestByMean(load1)).toEqual([0, 1, 2]);
    expect(hottestByMean(load2)).toEqual([0, 1, 2]);
    // A socket a degree or more hotter still comes first (a runaway is never hidden by the rounding).
    expect(hottestByMean([...load1, { socket: 9, meanC: 151.6 }])).toEqual([0, 1, 9]);
  });
  it('a tie for the last place goes to the lower socket number', () => {
    expect(
      hottestByMean(
        [9, 8, 5, 6].map((socket) => ({ socket, meanC: 150 })),
        3,
      ),
    ).toEqual([5, 6, 8]);
  });
});

describe('chart axes', () => {
  it('a drift or a ratio always has 0 on its axis; a ratio starts at exactly 0', () => {
    expect(domainWithZero([1.2, 3.5], { floorAtZero: true })[0]).toBe(0);
    const [lo, hi] = domainWithZero([2, 6]);
    expect(lo).toBeLessThan(0);
    expect(hi).toBeGreaterThan(6);
    const [lo2, hi2] = domainWithZero([-8, -3]);
    expect(lo2).toBeLessThan(-8);
    expect(hi2).toBeGreaterThan(0);
  });
  it('the right padding fits half of the last tick label ("1000" at 12 px)', () => {
    expect(endPadding('1000', 12)).toBeGreaterThanOrEqual(Math.ceil((4 * 12 * 0.6) / 2));
    expect(endPadding('1000', 12)).toBeGreaterThan(12); // the phone's old fixed 12 px cut it
    expect(endPadding('5', 24)).toBe(24);
  });
});
