/**
 * Qualification templates and cell states (shared/qualification/templates.ts). Sources beside each
 * check: the group C life numbers are published (MIL-PRF-19500/453F §4.4.3.1: 1000 h, n 45, c 0);
 * the AEC-Q101 and JESD47 numbers are from memory (shared/REFERENCE.md A9) and carry the
 * "confirm against the standard's current revision" words; the state rules are common practice.
 */
import {
  CONFIRM_WORDS,
  QUAL_TEMPLATES,
  QUAL_TEMPLATE_KEYS,
  basisWords,
  cellShortfall,
  cellState,
  groupOrder,
  planMatrix,
  qualificationStatus,
  type CellFacts,
} from '../../shared/qualification/templates';

const facts = (f: Partial<CellFacts>): CellFacts => ({
  waived: false,
  planKind: 'htrb',
  external: null,
  runStates: [],
  verdict: null,
  ...f,
});

describe('templates', () => {
  test('AEC-Q101: HTRB 3 lots × 77, accept 0 (from memory: AEC-Q101 Table 2 — confirm)', () => {
    const g = QUAL_TEMPLATES['aec-q101'].groups.find((x) => x.key === 'htrb')!;
    expect([g.planKind, g.lots, g.samplePerLot, g.acceptNumber, g.method, g.basis]).toEqual(['htrb', 3, 77, 0, 'JESD22-A108', 'memory']);
  });

  test('MIL-PRF-19500 group C life: 1000 h, n 45, c 0 (published: MIL-PRF-19500/453F §4.4.3.1)', () => {
    const g = QUAL_TEMPLATES['mil-prf-19500'].groups.find((x) => x.key === 'c-life')!;
    expect([g.planKind, g.samplePerLot, g.acceptNumber, g.basis]).toEqual(['hotl', 45, 0, 'published']);
    expect(g.conditions).toMatch(/1000 h/);
    expect(g.source).toMatch(/453F §4\.4\.3\.1/);
  });

  test('chamber groups map to the kinds the chamber branch adds (tc JESD22-A104, htsl A103, ac A102)', () => {
    const all = QUAL_TEMPLATE_KEYS.flatMap((k) => QUAL_TEMPLATES[k].groups);
    expect(new Set(all.filter((g) => g.method === 'JESD22-A104').map((g) => g.planKind))).toEqual(new Set(['tc']));
    expect(new Set(all.filter((g) => g.method === 'JESD22-A103').map((g) => g.planKind))).toEqual(new Set(['htsl']));
    expect(new Set(all.filter((g) => g.method === 'JESD22-A102').map((g) => g.planKind))).toEqual(new Set(['ac']));
  });

  test('every group names a source; recalled ones get the plain confirm words, never raw tags', () => {
    for (const k of QUAL_TEMPLATE_KEYS)
      for (const g of QUAL_TEMPLATES[k].groups) {
        expect(g.source.length).toBeGreaterThan(5);
        expect(g.source).not.toMatch(/\[memory|\[pub/);
        expect(g.acceptNumber).toBeLessThan(g.samplePerLot);
      }
    expect(basisWords('memory')).toBe(CONFIRM_WORDS);
    expect(CONFIRM_WORDS).toMatch(/confirm against the standard's current revision/);
  });

  test('AEC-Q101 order: preconditioned groups (TC, AC, H3TRB, IOL) first — from memory, confirm', () => {
    expect(groupOrder(QUAL_TEMPLATES['aec-q101']).map((g) => g.key)).toEqual([
      'tc',
      'ac',
      'h3trb',
      'iol',
      'htrb',
      'esd-hbm',
      'dpa',
      'pd',
      'sd',
    ]);
  });
});

describe('planMatrix', () => {
  test('a group uses the first N lots; fewer lots than asked is reported, not hidden', () => {
    const { cells, shortLots } = planMatrix(QUAL_TEMPLATES['aec-q101'], ['L1', 'L2']);
    expect(cells.filter((c) => c.groupKey === 'htrb').map((c) => c.lotId)).toEqual(['L1', 'L2']);
    expect(cells.filter((c) => c.groupKey === 'esd-hbm').map((c) => c.lotId)).toEqual(['L1']);
    expect(shortLots.map((s) => s.groupKey)).toEqual(['tc', 'ac', 'h3trb', 'iol', 'htrb']);
    expect(shortLots[0]).toEqual({ groupKey: 'tc', wanted: 3, chosen: 2 });
    expect(cells).toHaveLength(5 * 2 + 4);
  });
});

describe('cellState (common practice: a waiver stands over all; a pass needs every run finished)', () => {
  test.each<[string, Partial<CellFacts>, string]>([
    ['no runs', {}, 'not-started'],
    ['only aborted runs', { runStates: ['aborted'] }, 'not-started'],
    ['booked', { runStates: ['booked'], verdict: 'untested' }, 'booked'],
    ['stressing', { runStates: ['stressing'], verdict: 'in-progress' }, 'under-stress'],
    ['one finished, one on the rig', { runStates: ['finished', 'read-hold'], verdict: 'passed' }, 'under-stress'],
    ['one finished, one booked', { runStates: ['finished', 'booked'], verdict: 'passed' }, 'booked'],
    ['finished, passed', { runStates: ['finished'], verdict: 'passed' }, 'passed'],
    [
      'passed on 77 of a planned 77',
      { runStates: ['finished'], verdict: 'passed', judged: 77, plannedSample: 77, failures: 0, acceptNumber: 0 },
      'passed',
    ],
    [
      'passed on 45 of a planned 77: waits',
      { runStates: ['finished'], verdict: 'passed', judged: 45, plannedSample: 77 },
      'awaiting-verdict',
    ],
    [
      'passed with 1 failure where the cell accepts 0: waits',
      { runStates: ['finished'], verdict: 'passed', failures: 1, acceptNumber: 0 },
      'awaiting-verdict',
    ],
    ['finished, incomplete readings', { runStates: ['finished'], verdict: 'incomplete' }, 'awaiting-verdict'],
    ['finished, drifting', { runStates: ['finished'], verdict: 'drifting' }, 'awaiting-verdict'],
    ['failed while still stressing (failures beyond c are final)', { runStates: ['stressing'], verdict: 'failed' }, 'failed'],
    ['waived over a failure', { waived: true, runStates: ['finished'], verdict: 'failed' }, 'waived'],
    ['outside group, nothing recorded', { planKind: null }, 'not-started'],
    ['outside group, pass', { planKind: null, external: { result: 'pass' } }, 'passed'],
    ['outside group, fail', { planKind: null, external: { result: 'fail' } }, 'failed'],
    ['run-kind group done by an outside lab, no run here', { planKind: 'tc', external: { result: 'pass' } }, 'passed'],
    [
      'runs decide over an outside result',
      { runStates: ['stressing'], external: { result: 'pass' }, verdict: 'in-progress' },
      'under-stress',
    ],
  ])('%s', (_name, f, expected) => {
    expect(cellState(facts(f))).toBe(expected);
  });

  test('qualification status', () => {
    expect(qualificationStatus(['passed', 'waived'], 0)).toBe('complete');
    expect(qualificationStatus(['passed', 'waived'], 1)).toBe('in-progress');
    expect(qualificationStatus(['passed', 'under-stress'], 0)).toBe('in-progress');
    expect(qualificationStatus(['passed', 'failed'], 0)).toBe('failed');
    expect(qualificationStatus([], 0)).toBe('in-progress');
  });
});

test('cellShortfall words', () => {
  expect(cellShortfall(facts({ judged: 45, plannedSample: 77 }))).toBe('The verdict judged 45 devices; this cell plans 77.');
  expect(cellShortfall(facts({ failures: 2, acceptNumber: 1 }))).toBe('The verdict counted 2 failures; this cell accepts 1.');
  expect(cellShortfall(facts({ judged: 77, plannedSample: 77, failures: 0, acceptNumber: 0 }))).toBeNull();
});
