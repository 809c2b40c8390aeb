/** Words on the admin's screens and the rig page: no raw key, epoch or sequence number reaches a person. */
import { boardCaption } from '@/components/floor/board-caption';
import { matchesPerson } from '@/components/people/person-search';
import { intakeFigures } from '@/components/rigs/intake-figures';
import { formatLocal } from '@/shared/domain/format';

describe('intakeFigures', () => {
  const at = new Date(2026, 11, 4, 9, 30).getTime();
  const figures = intakeFigures({ ingest_messages: 15000, rollups_flushed_at_ms: at, ingest_dropped: 2, throttled_connects: 3 });
  it('the rollup watermark is a labelled date, not an epoch', () => {
    expect(figures.find((f) => f.key === 'rollups_flushed_at_ms')).toEqual({
      key: 'rollups_flushed_at_ms',
      kind: 'time',
      label: 'Per-minute summaries written up to',
      value: formatLocal(at),
      alert: false,
    });
  });
  it('counts are grouped and labelled; an unknown counter is named by its words', () => {
    expect(figures.map((f) => [f.label, f.value, f.alert])).toEqual([
      ['Messages stored', '15,000', false],
      ['Per-minute summaries written up to', '2026-12-04 09:30', false],
      ['Turned away (buffer full)', '2', true],
      ['Throttled connects', '3', false],
    ]);
    for (const f of figures) expect(f.label).not.toMatch(/_|[A-Z]{2,}_/);
  });
});

describe('matchesPerson (client-side: the whole list is already loaded)', () => {
  const ann = { name: 'Ann Pryce', email: 'ann.pryce@harrowgate-lab.example', role: 'operator' as const };
  it.each([
    ['', true],
    ['ann', true],
    ['PRYCE', true],
    ['harrowgate-lab', true],
    ['operator', true],
    ['ann operator', true],
    ['engineer', false],
    ['ann engineer', false],
  ])('%j → %s', (q, hit) => {
    expect(matchesPerson(ann, q)).toBe(hit);
  });
});

describe('boardCaption', () => {
  const run = { code: 'HG2612-C-R1', stressHours: 168.04 };
  it('names the time and the run, never the message number', () => {
    const at = new Date(2026, 11, 4, 9, 30).toISOString();
    const text = boardCaption(at, run);
    expect(text).toBe(`Readings from ${formatLocal(at)} (rig clock), run HG2612-C-R1 at 168 h of stress. Tap a socket for its readings.`);
    expect(text).not.toMatch(/message \d/);
  });
  it('says so when the rig never sent telemetry', () => {
    expect(boardCaption(null, run)).toBe('No telemetry from this rig yet.');
  });
});
