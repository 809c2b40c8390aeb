import { Outbox } from '../../rig-simulator';
import { seqsToRanges } from '../../shared/mqtt';

const fill = (o: Outbox, from: number, to: number) => {
  for (let s = from; s <= to; s++) o.add(s, `{"seq":${s}}`);
};

describe('rig outbox', () => {
  test('keeps unconfirmed samples and drops exactly the confirmed ones', () => {
    const o = new Outbox(100);
    fill(o, 1, 10);
    expect(
      o.confirm([
        [2, 4],
        [7, 7],
      ]),
    ).toBe(4);
    expect(o.pending().map((e) => e.seq)).toEqual([1, 5, 6, 8, 9, 10]);
    expect(o.confirm([[2, 4]])).toBe(0); // a repeated confirmation is harmless
    expect(o.confirm([[1, 1_000_000]])).toBe(6); // a wide range takes the map-scan path
    expect(o.size).toBe(0);
    expect(o.confirmed).toBe(10);
  });

  test('replays in seq order after partial confirmation and new samples', () => {
    const o = new Outbox();
    fill(o, 1, 5);
    o.confirm(seqsToRanges([1, 3]));
    fill(o, 6, 8);
    expect(o.pending().map((e) => e.seq)).toEqual([2, 4, 5, 6, 7, 8]);
  });

  test('due() returns entries not sent recently, oldest first, bounded', () => {
    const o = new Outbox();
    fill(o, 1, 5);
    [1, 2, 3].forEach((s) => o.markSent(s, 10_000));
    [4, 5].forEach((s) => o.markSent(s, 14_000));
    expect(o.due(15_000, 2_000).map((e) => e.seq)).toEqual([1, 2, 3]);
    expect(o.due(15_000, 2_000, 2).map((e) => e.seq)).toEqual([1, 2]);
    expect(o.due(20_000, 2_000).map((e) => e.seq)).toEqual([1, 2, 3, 4, 5]);
  });

  test('a full outbox drops its oldest entry and counts it', () => {
    const o = new Outbox(3);
    fill(o, 1, 5);
    expect(o.pending().map((e) => e.seq)).toEqual([3, 4, 5]);
    expect(o.overflowDropped).toBe(2);
  });

  test('a seq is never reused', () => {
    const o = new Outbox();
    fill(o, 1, 3);
    o.confirm([[1, 3]]);
    expect(() => o.add(3, '{}')).toThrow('outbox seq must increase');
  });

  test('seqsToRanges merges runs', () => {
    expect(seqsToRanges([5, 1, 2, 3, 9, 2])).toEqual([
      [1, 3],
      [5, 5],
      [9, 9],
    ]);
  });
});
