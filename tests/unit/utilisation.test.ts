/**
 * Utilisation arithmetic (shared/scheduling/utilisation.ts) on hand-worked examples. The
 * definitions are Emberlot's own (common practice for socket-hour accounting: reserved time split
 * into used, lost and idle); every check value below is worked out by hand in the comments.
 */
import { median as ssMedian } from 'simple-statistics';
import {
  median,
  runUsageByWeek,
  stateIntervals,
  subtractIntervals,
  utilisationByRigWeek,
  weekStartMs,
  WEEK_MS,
  type RunUsage,
} from '../../shared/scheduling/utilisation';

const H = 3_600_000;
const MON = Date.UTC(2026, 10, 30); // Monday 2026-11-30 00:00 UTC
const at = (h: number) => MON + h * H;
const close = (a: number, b: number) => expect(a).toBeCloseTo(b, 9);

describe('weeks', () => {
  it('a week starts on Monday 00:00 UTC (ISO 8601)', () => {
    expect(weekStartMs(Date.UTC(2026, 11, 4, 23, 45))).toBe(MON); // Friday 2026-12-04
    expect(weekStartMs(Date.UTC(2026, 11, 6, 23, 59))).toBe(MON); // Sunday still the same week
    expect(weekStartMs(Date.UTC(2026, 11, 7, 0, 0))).toBe(MON + WEEK_MS); // next Monday
  });
});

describe('one run in one week (hand-worked)', () => {
  // 4 sockets, window 0–100 h of the week. States (from the audit): loading 0, heating 1, stressing 2,
  // fault 50, heating 60 (retry), stressing 62, cooling 98, finished 100. Socket 3 trips at 80 h.
  const transitions = [
    { atMs: at(0), to: 'loading' },
    { atMs: at(1), to: 'heating' },
    { atMs: at(2), to: 'stressing' },
    { atMs: at(50), to: 'fault' },
    { atMs: at(60), to: 'heating' },
    { atMs: at(62), to: 'stressing' },
    { atMs: at(98), to: 'cooling' },
    { atMs: at(100), to: 'finished' },
  ];
  const run: RunUsage = {
    rigId: 'R',
    sockets: 4,
    windowStartMs: at(0),
    windowEndMs: at(100),
    stressing: stateIntervals(transitions, at(100), 'stressing'),
    faults: stateIntervals(transitions, at(100), 'fault'),
    trips: [at(80)],
    // Credited: 3 sockets × (48 + 36) h + the tripped one 48 + 18 h = 252 + 66 = 318 socket-h.
    creditedSocketH: 3 * 84 + 66,
  };

  it('reads the state intervals from the transitions', () => {
    expect(run.stressing).toEqual([
      [at(2), at(50)],
      [at(62), at(98)],
    ]);
    expect(run.faults).toEqual([[at(50), at(60)]]);
  });

  it('booked 400 = stressed 318 + idle 22 + lost 60', () => {
    const [row] = runUsageByWeek(run, [MON], H, at(200));
    // booked = 4 sockets × 100 h = 400
    close(row.bookedSh, 400);
    // lost = 4 sockets × 10 h of fault + the tripped socket 80 → 100 h = 40 + 20 = 60
    close(row.lostSh, 60);
    // stressed = the credited 318 (all stressing falls in this week; 318 ≤ 400 − 60)
    close(row.stressedSh, 318);
    // idle by hand: 4 sockets × (0–2, 60–62, 98–100 h) = 24, less the tripped socket's 98–100 h
    // (already lost) = 22
    close(row.idleSh, 22);
    close(row.bookedSh, row.stressedSh + row.idleSh + row.lostSh);
  });

  it('a trip inside a fault counts once', () => {
    const [row] = runUsageByWeek({ ...run, trips: [at(55)] }, [MON], H, at(200));
    // 4 × 10 h of fault + the tripped socket from 60 to 100 h (55–60 is already fault time) = 40 + 40
    close(row.lostSh, 80);
  });

  it('stops at now', () => {
    // At 40 h the run has earned 4 sockets × 38 h = 152 socket-h so far (the stored credit is
    // always what accrued up to now).
    const [row] = runUsageByWeek({ ...run, creditedSocketH: 152 }, [MON], H, at(40));
    // window 0–40 h: booked 160; no fault or trip yet; stressed 152; idle 4 × 2 h (loading, heating) = 8
    close(row.bookedSh, 160);
    close(row.lostSh, 0);
    close(row.stressedSh, 152);
    close(row.idleSh, 8);
  });

  it('never credits more than booked − lost', () => {
    const [row] = runUsageByWeek({ ...run, creditedSocketH: 1000 }, [MON], H, at(200));
    close(row.stressedSh, 340);
    close(row.idleSh, 0);
  });

  it('counts on the accelerated clock in stress-clock hours', () => {
    // 1 stress hour per wall second: msPerClockH = 1000; the same run squeezed into 100 s
    const fast: RunUsage = {
      ...run,
      windowStartMs: MON,
      windowEndMs: MON + 100_000,
      stressing: [[MON + 2000, MON + 50_000]],
      faults: [],
      trips: [],
    };
    const [row] = runUsageByWeek({ ...fast, creditedSocketH: 192 }, [MON], 1000, MON + 1e6);
    close(row.bookedSh, 400);
    close(row.stressedSh, 192);
    close(row.idleSh, 208);
  });
});

describe('a run across two weeks (hand-worked)', () => {
  // 2 sockets, window Sunday 12:00 → Monday 12:00 (24 h); heating 2 h, then stressing 22 h (10 h
  // in the first week, 12 h in the second); credited 2 × 22 = 44 socket-h.
  const sun12 = MON + WEEK_MS - 12 * H;
  const run: RunUsage = {
    rigId: 'R',
    sockets: 2,
    windowStartMs: sun12,
    windowEndMs: sun12 + 24 * H,
    stressing: [[sun12 + 2 * H, sun12 + 24 * H]],
    faults: [],
    trips: [],
    creditedSocketH: 44,
  };

  it('splits booked and stressed by week', () => {
    const rows = utilisationByRigWeek([run], ['R', 'S'], [MON, MON + WEEK_MS], H, sun12 + 100 * H);
    const r1 = rows.find((r) => r.rigId === 'R' && r.weekStartMs === MON)!;
    const r2 = rows.find((r) => r.rigId === 'R' && r.weekStartMs === MON + WEEK_MS)!;
    // week 1: booked 2 × 12 = 24; stressed 44 × 10/22 = 20; idle 4 (the heating)
    close(r1.bookedSh, 24);
    close(r1.stressedSh, 20);
    close(r1.idleSh, 4);
    // week 2: booked 2 × 12 = 24; stressed 44 × 12/22 = 24; idle 0
    close(r2.bookedSh, 24);
    close(r2.stressedSh, 24);
    close(r2.idleSh, 0);
    // an unused rig still gets its rows, all zero
    const s = rows.filter((r) => r.rigId === 'S');
    expect(s).toHaveLength(2);
    expect(s.every((r) => r.bookedSh === 0 && r.stressedSh === 0 && r.idleSh === 0 && r.lostSh === 0)).toBe(true);
  });
});

describe('interval helpers and the median', () => {
  it('subtracts overlapping cuts', () => {
    expect(
      subtractIntervals(
        [0, 10],
        [
          [2, 4],
          [3, 5],
          [8, 12],
        ],
      ),
    ).toEqual([
      [0, 2],
      [5, 8],
    ]);
  });

  it('median agrees with simple-statistics (reference library)', () => {
    for (const xs of [[5, 1, 3], [4, 1, 3, 2], [7], [2.5, 2.5, 10, 0.1, 3]]) expect(median(xs)).toBe(ssMedian(xs));
    // by hand: odd count → the middle value; even → the mean of the middle two
    expect(median([5, 1, 3])).toBe(3);
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median([])).toBeNull();
  });
});
