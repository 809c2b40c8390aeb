/**
 * The schedule's scale (components/schedule/timeline-scale.ts): the same zoom on every visit,
 * labels inside the visible window at phone width, panning by half a window, due-date input.
 * Arithmetic checks are worked by hand here (common practice: 100 px per zoom unit).
 */
import {
  DEFAULT_ZOOM_H,
  latenessWords,
  panStepH,
  parseDueInput,
  readZoom,
  relativeLabel,
  saveZoom,
  ticks,
  visibleWindow,
} from '@/components/schedule/timeline-scale';

const NOW = Date.UTC(2026, 11, 4, 12, 0);
const REAL = 3_600_000;
const DEMO = 1000; // the demo clock: one stress hour per wall second

describe('visible window', () => {
  it('a 278 px phone track at 1 day per 100 px shows 66.7 clock hours, 15 % of them before now', () => {
    const w = visibleWindow(NOW, REAL, 278, 24, 0);
    expect((w.toMs - w.fromMs) / REAL).toBeCloseTo(66.72, 6);
    expect((NOW - w.fromMs) / REAL).toBeCloseTo(0.15 * 66.72, 6);
  });
  it('the demo clock and a real clock give the same picture in clock hours', () => {
    const real = visibleWindow(NOW, REAL, 500, 24, 10);
    const demo = visibleWindow(NOW, DEMO, 500, 24, 10);
    expect((real.toMs - real.fromMs) / REAL).toBeCloseTo((demo.toMs - demo.fromMs) / DEMO, 9);
    expect((real.fromMs - NOW) / REAL).toBeCloseTo((demo.fromMs - NOW) / DEMO, 9);
  });
  it('Earlier/Later move half a window: 278 px at 24 h per 100 px → 33 h', () => {
    expect(panStepH(278, 24)).toBe(33);
  });
});

describe('ticks', () => {
  it('a phone track always gets labels inside the window, at least 84 px apart', () => {
    for (const width of [200, 278, 320]) {
      for (const h of [3, 24, 336]) {
        const w = visibleWindow(NOW, DEMO, width, h, 0);
        const t = ticks(w, NOW, DEMO);
        expect(t.ticks.length).toBeGreaterThanOrEqual(1);
        for (const k of t.ticks) expect(k.ms >= w.fromMs && k.ms <= w.toMs).toBe(true);
        expect((t.stepH * DEMO) / w.msPerPx).toBeGreaterThanOrEqual(84);
      }
    }
  });
  it('on the demo clock the labels count clock time from now', () => {
    const w = visibleWindow(NOW, DEMO, 400, 24, 0);
    expect(ticks(w, NOW, DEMO).ticks.map((k) => k.label)).toEqual(['now', '+1 d', '+2 d', '+3 d']);
  });
  it('relative labels', () => {
    expect(relativeLabel(-36)).toBe('−1 d 12 h');
    expect(relativeLabel(6)).toBe('+6 h');
    expect(relativeLabel(48)).toBe('+2 d');
  });
});

describe('the zoom is remembered per user', () => {
  // The app's jest project has no browser storage: a Map stands in for the browser's localStorage.
  beforeEach(() => {
    const m = new Map<string, string>();
    Object.defineProperty(globalThis, 'localStorage', {
      configurable: true,
      value: { getItem: (k: string) => m.get(k) ?? null, setItem: (k: string, v: string) => void m.set(k, v) },
    });
  });
  afterAll(() => {
    Reflect.deleteProperty(globalThis, 'localStorage');
  });
  it('first visit: the default; after a choice: that choice for that user only', () => {
    expect(readZoom('u1')).toBe(DEFAULT_ZOOM_H);
    saveZoom('u1', 96);
    expect(readZoom('u1')).toBe(96);
    expect(readZoom('u2')).toBe(DEFAULT_ZOOM_H);
  });
  it('a stored value that is not a zoom level is ignored', () => {
    globalThis.localStorage?.setItem('emberlot.schedule.zoomH.u3', '7');
    expect(readZoom('u3')).toBe(DEFAULT_ZOOM_H);
  });
});

describe('due date input and lateness words', () => {
  it('parses local date and time; a date alone means the end of that day', () => {
    expect(parseDueInput('2026-12-20 17:00')).toEqual({ iso: new Date(2026, 11, 20, 17, 0).toISOString() });
    expect(parseDueInput('2026-12-20')).toEqual({ iso: new Date(2026, 11, 20, 23, 59).toISOString() });
    expect(parseDueInput('')).toEqual({ iso: null });
  });
  it('refuses what is not a date, in words', () => {
    expect(parseDueInput('next friday')).toEqual({ error: 'Write the date as YYYY-MM-DD HH:MM (your time), e.g. 2026-12-20 17:00' });
    expect(parseDueInput('2026-02-30 10:00')).toEqual({ error: 'That date does not exist; write it as YYYY-MM-DD HH:MM' });
  });
  it('lateness in words', () => {
    expect(latenessWords(null)).toBe('No due date');
    expect(latenessWords(0)).toBe('On time');
    expect(latenessWords(12.5)).toBe('Late by 12.5 h');
    expect(latenessWords(150)).toBe('Late by 6.3 d');
  });
});
