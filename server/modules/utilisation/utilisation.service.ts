/**
 * Rig utilisation per week and request-to-verdict turnaround, for managers (issue #26 item 4). The
 * arithmetic and its definitions are in shared/scheduling/utilisation.ts; this file reads the
 * stored facts: bookings and run times (runs), state changes (the audit log's from/to), credited
 * hours and trips (run_sockets), verdict signatures.
 */
import type { Utilisation, UtilisationQuery, UtilisationRow } from '../../../shared/schemas/replan';
import {
  median,
  stateIntervals,
  utilisationByRigWeek,
  UTILISATION_DEFINITIONS,
  WEEK_MS,
  weekStartMs,
  type RunUsage,
} from '../../../shared/scheduling/utilisation';
import type { AppContext } from '../../context';
import { CsvSheet } from '../reports/csv';
import * as data from './utilisation.data';

const H = 3_600_000;
/** Rounding of the figures sent (socket-hours to 0.001: sums stay exact to well below what is shown). */
const round3 = (x: number) => Math.round(x * 1000) / 1000;

export class UtilisationService {
  constructor(private readonly ctx: AppContext) {}

  async report(q: UtilisationQuery): Promise<Utilisation> {
    const m = this.ctx.ds.manager;
    const nowMs = this.ctx.now().getTime();
    const lastWeek = weekStartMs(q.to ? Math.min(Date.parse(q.to), nowMs) : nowMs);
    const weekStarts = Array.from({ length: q.weeks }, (_, i) => lastWeek - (q.weeks - 1 - i) * WEEK_MS);
    const from = new Date(weekStarts[0]);
    const to = new Date(lastWeek + WEEK_MS);
    // Wall hours: a credited stress hour is a wall hour on a real rig (and in the seeded history).
    // The demo's accelerated clock earns credit faster than the wall clock: its live runs then show
    // stressed = booked − lost (the cap), never more.
    const msPerClockH = H;
    const rows = await data.usageRuns(m, from, to);
    const trans = await data.transitions(
      m,
      rows.map((r) => r.id),
    );
    const byRun = new Map<string, Array<{ atMs: number; to: string }>>();
    for (const t of trans) {
      const list = byRun.get(t.run_id) ?? [];
      list.push({ atMs: new Date(t.at).getTime(), to: t.to_state });
      byRun.set(t.run_id, list);
    }
    const usage: RunUsage[] = rows.map((r) => {
      const started = r.started_at ? new Date(r.started_at).getTime() : null;
      const booked = r.scheduled_start ? new Date(r.scheduled_start).getTime() : (started ?? nowMs);
      const windowStartMs = started !== null ? Math.min(started, booked) : booked;
      const bookedEnd = r.scheduled_end ? new Date(r.scheduled_end).getTime() : windowStartMs;
      // Finished or aborted: the window ends then. A run still on the rig holds it at least until now.
      const windowEndMs = r.finished_at ? new Date(r.finished_at).getTime() : started !== null ? Math.max(bookedEnd, nowMs) : bookedEnd;
      const endMs = Math.min(windowEndMs, nowMs);
      const list = byRun.get(r.id) ?? [];
      // A run with no recorded state changes (history entered in bulk) stressed from start to finish.
      const stressing =
        list.length || started === null ? stateIntervals(list, endMs, 'stressing') : ([[started, endMs]] as Array<[number, number]>);
      return {
        rigId: r.rig_id,
        sockets: r.sample_size,
        windowStartMs,
        windowEndMs,
        stressing,
        faults: stateIntervals(list, endMs, 'fault'),
        trips: (r.trips ?? []).map((d) => new Date(d).getTime()),
        creditedSocketH: Number(r.credited_socket_h),
      };
    });
    const rigs = await data.rigCodes(m);
    const code = new Map(rigs.map((g) => [g.id, g.code]));
    const out: UtilisationRow[] = utilisationByRigWeek(
      usage,
      rigs.map((g) => g.id),
      weekStarts,
      msPerClockH,
      nowMs,
    ).map((r) => ({
      rigCode: code.get(r.rigId) ?? '?',
      weekStart: new Date(r.weekStartMs).toISOString(),
      bookedSh: round3(r.bookedSh),
      stressedSh: round3(r.stressedSh),
      lostSh: round3(r.lostSh),
      idleSh: round3(r.bookedSh) - round3(r.stressedSh) - round3(r.lostSh),
    }));
    for (const r of out) r.idleSh = round3(r.idleSh);
    const lots = (await data.turnaround(m, from, to)).map((t) => {
      const requestedAt = new Date(t.requested_at);
      const signedAt = new Date(t.signed_at);
      return {
        lotCode: t.lot_code,
        requestedAt: requestedAt.toISOString(),
        signedAt: signedAt.toISOString(),
        hours: (signedAt.getTime() - requestedAt.getTime()) / H,
      };
    });
    return {
      weeks: weekStarts.map((w) => new Date(w).toISOString()),
      rigs: rigs.map((g) => g.code),
      rows: out,
      turnaround: { medianH: median(lots.map((l) => l.hours)), lots },
      definitions: { ...UTILISATION_DEFINITIONS },
    };
  }

  async csv(q: UtilisationQuery): Promise<string> {
    const u = await this.report(q);
    const s = new CsvSheet();
    s.row(['Rig', 'Week starting (UTC)', 'Booked socket-h', 'Stressed socket-h', 'Idle socket-h', 'Lost to faults socket-h']);
    for (const r of u.rows) s.row([r.rigCode, r.weekStart.slice(0, 10), r.bookedSh, r.stressedSh, r.idleSh, r.lostSh]);
    s.blank();
    s.row(['Median request-to-verdict (h)', u.turnaround.medianH === null ? '' : round3(u.turnaround.medianH)]);
    s.row(['Lot', 'Requested (UTC)', 'Verdict signed (UTC)', 'Hours']);
    for (const l of u.turnaround.lots) s.row([l.lotCode, l.requestedAt, l.signedAt, round3(l.hours)]);
    s.blank();
    for (const d of Object.values(u.definitions)) s.row([d]);
    return s.text();
  }
}
