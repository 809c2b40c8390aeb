import { request, type APIRequestContext } from 'playwright-core';
import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

async function apiAs(baseUrl: string, who: { email: string; password: string }): Promise<APIRequestContext> {
  const api = await request.newContext({ baseURL: baseUrl, extraHTTPHeaders: { Origin: baseUrl } });
  const res = await api.post('/api/auth/sign-in', { data: { email: who.email, password: who.password } });
  if (!res.ok()) throw new Error(`sign-in as ${who.email}: ${res.status()} ${await res.text()}`);
  return api;
}

async function json<T>(
  p: Promise<{ ok(): boolean; status(): number; json(): Promise<unknown>; text(): Promise<string> }>,
  what: string,
): Promise<T> {
  const res = await p;
  if (!res.ok()) throw new Error(`${what}: ${res.status()} ${await res.text()}`);
  return (await res.json()) as T;
}

const DAY = 24 * 3_600_000;

/**
 * Manager: a rig drops out and its booked run is placed again. An engineer books an HTRB run of
 * HPD-2N140 devices on OV-01 weeks ahead (through the API); an admin puts OV-01 into maintenance
 * across that booking (a simulated rig failure). The manager opens Capacity, sees the utilisation
 * chart and the run's re-plan options (in place after the window, or a move with its delay), and
 * accepts the move with one click: the run is booked on the other rig. Cleanup: the run is aborted
 * and the maintenance window removed (both sizes share the stack).
 */
export const managerReplan: Journey = {
  name: 'replan',
  run: async (j) => {
    const { page } = j;
    const eng = await apiAs(j.baseUrl, DEMO.engineer);
    const admin = await apiAs(j.baseUrl, DEMO.admin);
    const plans = await json<{ items: Array<{ id: string; kind: string; checkStatus: string; device: { partNumber: string } }> }>(
      eng.get('/api/plans'),
      'plans',
    );
    const plan = plans.items.find((p) => p.kind === 'htrb' && p.device.partNumber === 'HPD-2N140' && p.checkStatus !== 'block');
    const lots = await json<{ items: Array<{ id: string; code: string; partNumber: string }> }>(eng.get('/api/lots'), 'lots');
    const lot = lots.items.find((l) => l.partNumber === 'HPD-2N140');
    const timeline = await json<{ rows: Array<{ rigId: string; code: string }> }>(eng.get('/api/runs/timeline'), 'timeline');
    const rig = timeline.rows.find((r) => r.code === 'OV-01');
    if (!plan || !lot || !rig) throw new Error('the demo data lacks an HTRB plan of HPD-2N140, a lot of it, or rig OV-01');
    // Weeks ahead, clear of the demo's runs; the phone and wide runs a week apart.
    const start = new Date(Math.ceil((Date.now() + (j.size === 'phone' ? 40 : 47) * DAY) / 3_600_000) * 3_600_000);
    const booked = await json<{ id: string; code: string }>(
      eng.post('/api/runs', {
        data: {
          planId: plan.id,
          lotIds: [lot.id],
          sampleSize: 4,
          rigId: rig.rigId,
          start: start.toISOString(),
          deviation: { reason: `Re-plan journey (${j.size}): four devices booked to be moved.` },
        },
      }),
      'booking',
    );
    const window = await json<{ id: string }>(
      admin.post('/api/rigs/OV-01/maintenance', {
        data: {
          startsAt: new Date(start.getTime() - 3_600_000).toISOString(),
          endsAt: new Date(start.getTime() + 2 * 3_600_000).toISOString(),
          reason: `Heater fault found (${j.size} journey)`,
        },
      }),
      'maintenance',
    );
    j.log(`booked ${booked.code} on OV-01 at ${start.toISOString()}; OV-01 in maintenance over it`);
    try {
      const proposals = await json<{ items: Array<{ id: string; runId: string; kind: string; toRigCode: string; delayH: number }> }>(
        eng.get('/api/replan?state=open'),
        're-plan list',
      );
      const mine = proposals.items.filter((p) => p.runId === booked.id);
      const move = mine.find((p) => p.kind === 'move');
      if (!mine.some((p) => p.kind === 'in-place') || !move)
        throw new Error(`expected an in-place and a move proposal for ${booked.code}, got ${JSON.stringify(mine)}`);

      await j.signIn(DEMO.manager.email, DEMO.manager.password);
      await page.waitForURL((u) => u.pathname !== '/sign-in');
      await j.navTo('Capacity');
      await expect(page.getByRole('heading', { name: 'Capacity and re-planning' }).first()).toBeVisible();
      // The utilisation chart comes from the lazy chart chunk.
      const chart = page.getByTestId('utilisation-chart');
      await expect(chart).toBeVisible();
      await expect(chart.locator('svg').first()).toBeVisible();
      await expect(page.getByTestId('turnaround-median')).toContainText('Median request-to-verdict');
      await expect(page.getByTestId('utilisation-definitions')).toContainText('Idle: booked − stressed − lost');
      const card = page.getByTestId(`replan-${booked.code}`);
      await expect(card).toContainText(`Stay on OV-01`);
      await expect(card).toContainText(`Move to ${move.toRigCode}`);
      await expect(card).toContainText(/h late against its booked finish|On time against its booked finish/);
      await expect(card).toContainText('in maintenance');
      await card.scrollIntoViewIfNeeded();
      await j.checkA11y('capacity with a re-plan');
      await j.shot('replan-proposals');
      await page.getByTestId(`replan-accept-${booked.code}-${move.toRigCode}`).click();
      await expect(page.getByTestId(`replan-${booked.code}`)).toHaveCount(0);
      const run = await json<{ rig: { code: string } | null; state: string }>(eng.get(`/api/runs/${booked.id}`), 'the run');
      if (run.rig?.code !== move.toRigCode || run.state !== 'booked')
        throw new Error(`${booked.code} should be booked on ${move.toRigCode}, is ${run.state} on ${run.rig?.code}`);
      await j.shot('replan-accepted');
      await chart.scrollIntoViewIfNeeded();
      await j.shot('utilisation-chart');
    } finally {
      const r = await json<{ rowVersion: number }>(eng.get(`/api/runs/${booked.id}`), 'the run');
      await json(
        eng.post(`/api/runs/${booked.id}/abort`, { data: { rowVersion: r.rowVersion, reason: 'Re-plan journey done.' } }),
        'cleanup: abort',
      );
      const del = await admin.delete(`/api/rigs/OV-01/maintenance/${window.id}`);
      if (!del.ok()) j.log(`cleanup: removing the maintenance window answered ${del.status()}`);
      await eng.dispose();
      await admin.dispose();
    }
  },
};
