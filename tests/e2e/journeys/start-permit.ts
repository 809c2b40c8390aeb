import { request, type APIRequestContext } from 'playwright-core';
import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/** A signed-in API client of its own (the page keeps the operator's session). */
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

/**
 * Operator: Start asks for its permit. A run of four HPD-3P90 devices on OV-04 (an idle board in
 * the demo fleet: four reverse-bias sockets) is booked and loaded through the API. Start first
 * shows the permit refusing (no time-zero readings, each device named; nothing can be confirmed),
 * then, with the readings stored, the confirmation with the plan's temperature and voltage and the
 * high-voltage / hot-oven caution. The powered plan's regulated-current bias is refused by the
 * reverse-bias board: the run goes into the fault state, the page shows the banner and "Rig fault"
 * instead of "Under stress", and offers Retry after fix; the run is then aborted (both sizes share the
 * stack). Uses lot HG2610-E serials E0121–E0128, which no other journey reads; runs after every
 * journey that reads OV-04 or the schedule.
 */
export const operatorStartPermit: Journey = {
  name: 'operator-start-permit',
  run: async (j) => {
    const { page } = j;
    // --- Setup through the API: book (engineer) and load (operator) ------------------------
    const eng = await apiAs(j.baseUrl, DEMO.engineer);
    const plans = await json<{ items: Array<{ id: string; kind: string; device: { partNumber: string } }> }>(
      eng.get('/api/plans'),
      'plans',
    );
    const plan = plans.items.find((p) => p.kind === 'hotl' && p.device.partNumber === 'HPD-3P90');
    const lots = await json<{ items: Array<{ id: string; code: string }> }>(eng.get('/api/lots'), 'lots');
    const lot = lots.items.find((l) => l.code === 'HG2610-E');
    const timeline = await json<{ rows: Array<{ rigId: string; code: string }> }>(eng.get('/api/runs/timeline'), 'timeline');
    const rig = timeline.rows.find((r) => r.code === 'OV-04');
    if (!plan || !lot || !rig) throw new Error('the demo data lacks the HPD-3P90 powered-life plan, lot HG2610-E or rig OV-04');
    // Both sizes share the stack: a run this journey left open on OV-04 (a failed earlier size) is aborted first.
    const open = await json<{ items: Array<{ id: string; code: string; rowVersion: number }> }>(
      eng.get(`/api/runs?rigId=${rig.rigId}&open=1`),
      'open runs on OV-04',
    );
    for (const r of open.items.filter((x) => x.code.startsWith('HOTL-2610-E'))) {
      await json(
        eng.post(`/api/runs/${r.id}/abort`, { data: { rowVersion: r.rowVersion, reason: 'Left open by an earlier journey size.' } }),
        'cleanup',
      );
    }
    const booked = await json<{ id: string; code: string; rowVersion: number }>(
      eng.post('/api/runs', {
        data: {
          planId: plan.id,
          lotIds: [lot.id],
          sampleSize: 4,
          rigId: rig.rigId,
          deviation: { reason: `Start-permit journey (${j.size}): four devices on the idle board of OV-04.` },
        },
      }),
      'booking',
    );
    const first = j.size === 'phone' ? 121 : 125;
    const serials = [0, 1, 2, 3].map((k) => `E0${first + k}`);
    const op = await apiAs(j.baseUrl, DEMO.operator);
    await json(
      op.put(`/api/runs/${booked.id}/sockets`, {
        data: { rowVersion: booked.rowVersion, sockets: Object.fromEntries(serials.map((s, i) => [String(i), s])) },
      }),
      'loading',
    );
    j.log(`booked and loaded ${booked.code} on OV-04`);

    // --- Start: the permit refuses (no time-zero readings), nothing can be confirmed -------------
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname !== '/sign-in');
    await page.goto(`${j.baseUrl}/runs/${booked.id}`);
    await expect(page.getByRole('heading', { name: booked.code }).first()).toBeVisible();
    await expect(page.getByText('4 of 4 sockets loaded. Start once every device is placed.')).toBeVisible();
    await page.getByRole('button', { name: 'Start', exact: true }).click();
    const dialog = page.getByTestId('start-dialog');
    await expect(dialog.getByText(`Start ${booked.code}?`)).toBeVisible();
    const timeZero = page.getByTestId('permit-time-zero');
    await expect(timeZero).toContainText('Missing');
    await expect(timeZero).toContainText(
      `4 of 4 loaded devices have no time-zero (0 h) reading: ${serials.map((s, k) => `${s} (socket ${k})`).join(', ')}.`,
    );
    await expect(page.getByTestId('permit-sockets')).toContainText(
      /OV-04 reports 4 sockets \(0–3\) in its latest telemetry .*; all 4 loaded sockets are among them\./,
    );
    await expect(page.getByTestId('permit-calibration')).toContainText(/OV-04 is calibrated until \d{4}-\d\d-\d\d\./);
    await expect(page.getByTestId('permit-interlock')).toContainText(/OV-04's interlocks were tested on \d{4}-\d\d-\d\d/);
    await expect(page.getByTestId('start-refused')).toContainText(
      `${booked.code} cannot start until every check passes; nothing has been switched on.`,
    );
    const confirm = page.getByRole('button', { name: 'Confirm and start' });
    if ((await confirm.getAttribute('aria-disabled')) !== 'true' && !(await confirm.isDisabled()))
      throw new Error('Confirm and start is offered while the permit refuses');
    await expect(page.getByRole('dialog')).toBeVisible(); // the modal settled (its role is set once it has opened)
    await j.checkA11y('start permit refused');
    await j.shot('start-permit-refused');
    await page.getByRole('button', { name: 'Cancel' }).click();
    await expect(page.getByTestId('start-dialog')).toHaveCount(0);

    // --- Time-zero readings stored; Start now asks to confirm the temperature and voltage ------
    await json(
      op.post(`/api/measurements/runs/${booked.id}/read-points/0/measurements`, {
        data: serials.map((serial, i) => ({
          serial,
          hfe: 95 + i,
          hfeIcA: 0.5,
          hfeVceV: 5,
          icboA: 3e-8,
          icboVcbV: 60,
          vcesatV: 0.32,
          measuredC: 25,
        })),
      }),
      'time-zero readings',
    );
    await page.getByRole('button', { name: 'Start', exact: true }).click();
    await expect(page.getByTestId('permit-time-zero')).toContainText('All 4 loaded devices have a time-zero reading.');
    const caution = page.getByTestId('start-confirm-caution');
    await expect(caution).toContainText(/^Safety caution/);
    await expect(caution).toContainText(
      /Confirm: OV-04 heats its chamber to \d+(\.\d+)? °C and applies powered at VCE \d+(\.\d+)? V to 4 devices\./,
    );
    await expect(page.getByRole('dialog')).toBeVisible();
    const go = page.getByRole('button', { name: 'Confirm and start' });
    for (let k = 0; k < 50 && (await go.getAttribute('aria-disabled')) === 'true'; k++) await page.waitForTimeout(100);
    await j.checkA11y('start confirmation');
    await j.shot('start-confirmation');
    await page.getByRole('button', { name: 'Confirm and start' }).click();
    await expect(page.getByTestId('start-dialog')).toHaveCount(0, 15000);
    await expect(page.getByText('Heating', { exact: true }).first()).toBeVisible();

    // --- The reverse-bias board refuses the powered bias: fault, banner, no "Under stress" -------
    await expect(page.getByText(/^Rig fault since .*: OV-04 refused the bias-on command: ".*"\. /)).toBeVisible(120000);
    await expect(page.getByText('Rig fault', { exact: true }).first()).toBeVisible();
    await expect(page.getByText('Under stress', { exact: true })).toHaveCount(0);
    await expect(page.getByRole('button', { name: 'Retry after fix' })).toBeVisible();
    await expect(page.getByRole('button', { name: 'Abort run' })).toBeVisible();
    await page.getByRole('heading', { name: booked.code }).first().scrollIntoViewIfNeeded();
    await j.checkA11y('run in fault');
    await j.shot('run-fault-banner');

    // The floor tile of OV-04 says "Rig fault", not "Stressing".
    await j.navTo('Floor');
    await page.waitForURL((u) => u.pathname === '/floor');
    await expect(page.getByTestId('rig-tile-OV-04')).toContainText('Rig fault');
    await page.getByTestId('rig-tile-OV-04').scrollIntoViewIfNeeded();
    await j.shot('floor-rig-fault');

    // Both sizes share the stack: the run leaves the fault state by abort (with a reason), which
    // frees OV-04's sockets for the next size.
    const now = await json<{ rowVersion: number }>(op.get(`/api/runs/${booked.id}`), 'run');
    const aborted = await json<{ state: string }>(
      op.post(`/api/runs/${booked.id}/abort`, {
        data: { rowVersion: now.rowVersion, reason: 'Reverse-bias board fitted; the powered board is not available.' },
      }),
      'abort',
    );
    if (aborted.state !== 'aborted') throw new Error(`abort left the run ${aborted.state}`);
    await eng.dispose();
    await op.dispose();
  },
};
