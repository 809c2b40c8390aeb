import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

const RUN = 'THB-2612-G';
const RIG = 'HC-05';

/**
 * Read-point holds: the demo's humidity run (THB-2612-G on HC-05, 120 h at the start, read point at
 * 168 h on the accelerated clock) reaches its read point during the journeys. The hold cools under
 * bias with humidity off, removes bias at the lab's temperature, and the run page shows where it
 * stands with the caution; the rig chart marks each step. Then an admin sees a refused hold setting
 * explained and changes the safe-to-open temperature with a reason.
 */
export const holdsReadPoint: Journey = {
  name: 'holds-read-point',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname === '/floor');

    // Wait (through the API) for the THB run's hold to remove bias: it reaches 168 h about a minute after the stack starts.
    type RunRow = { id: string; code: string; state: string; holdPhase: string | null; biasRemovedAt: string | null };
    let run: RunRow | undefined;
    for (let k = 0; k < 180; k++) {
      const list = (await (await page.request.get(`${j.baseUrl}/api/runs?open=1`)).json()) as { items: RunRow[] };
      run = list.items.find((r) => r.code === RUN);
      if (run?.biasRemovedAt && run.holdPhase === 'safe-to-open') break;
      await page.waitForTimeout(1000);
    }
    if (!run || run.holdPhase !== 'safe-to-open') throw new Error(`${RUN} did not finish its hold's cool-down: ${JSON.stringify(run)}`);
    j.log(`${RUN}: ${run.state}, hold ${run.holdPhase}, bias off ${run.biasRemovedAt}`);

    // Both sizes share one stack, and the admin step below changes the safe-to-open setting: read it first.
    const lab = (await (await page.request.get(`${j.baseUrl}/api/lab-settings`)).json()) as {
      coolUnderBiasToC: number;
      safeToOpenC: number;
    };

    // --- The run page: the hold, the lab's temperatures, the caution, the audit trail ----------
    await page.goto(`${j.baseUrl}/runs/${run.id}`);
    await expect(page.getByRole('heading', { name: RUN }).first()).toBeVisible();
    const card = page.getByTestId('hold-card');
    await expect(card).toBeVisible();
    await expect(page.getByTestId('hold-phase')).toContainText('Safe to open');
    await expect(page.getByTestId('hold-phase-text')).toContainText(
      `At or below ${lab.safeToOpenC} °C, the lab's safe-to-open temperature.`,
    );
    await expect(card).toContainText(`Lab settings: bias off at ${lab.coolUnderBiasToC} °C, safe to open at ${lab.safeToOpenC} °C.`);
    await expect(card).toContainText(`Safe to open by the lab’s ${lab.safeToOpenC} °C setting, yet parts and boards can still be hot.`);
    await expect(card).toContainText("A software trip is no substitute for the rig's hardware interlocks.");
    await expect(page.getByText(/^Read point 168(\.0)? h: bias off since /)).toBeVisible();
    await expect(page.getByText('Read point reached; cooling under bias').first()).toBeVisible();
    await expect(page.getByText('Hold: Safe to open (bias off)').first()).toBeVisible();
    await j.checkA11y('run page hold');
    await card.scrollIntoViewIfNeeded();
    await j.shot('run-hold');

    // --- The rig chart: cooling under bias, then bias off ----------------------------------
    await page.goto(`${j.baseUrl}/floor/${RIG}`);
    await expect(page.getByRole('heading', { name: `Rig ${RIG}` }).first()).toBeVisible();
    await expect(page.getByTestId('rig-chart')).toBeVisible(20000);
    // The last 15 minutes come from every sample (the hour view averages per minute).
    await page.getByRole('radio', { name: '15 min', exact: true }).click();
    const steps = page.getByTestId('hold-steps');
    await expect(steps).toBeVisible(20000);
    await expect(steps).toContainText(`${RUN}: Cooling under bias`);
    await expect(steps).toContainText(`${RUN}: Bias off; safe to open`);
    const text = await steps.innerText();
    if (text.indexOf('Cooling under bias') > text.indexOf('Bias off; safe to open')) throw new Error(`hold steps out of order: ${text}`);
    await page.getByTestId('rig-chart').scrollIntoViewIfNeeded();
    await j.shot('rig-chart-hold');

    // --- Admin: the hold settings, a refused value explained, then a change with a reason -----
    await page.context().clearCookies();
    await j.signIn(DEMO.admin.email, DEMO.admin.password);
    await page.waitForURL((u) => u.pathname === DEMO.admin.home);
    await j.navTo('Rigs');
    await page.waitForURL((u) => u.pathname === '/rigs');
    const panel = page.getByTestId('hold-settings');
    await expect(panel).toBeVisible();
    await expect(page.getByTestId('hold-safe-value')).toContainText(`${lab.safeToOpenC} °C`);
    const next = lab.safeToOpenC === 45 ? 42 : 45;
    await page.getByTestId('hold-edit').click();
    await page.getByTestId('hold-safe-to-open').fill('75');
    await page.getByTestId('hold-reason').fill(`Journey check (${j.size})`);
    await page.getByTestId('hold-save').click();
    await expect(panel).toContainText('Safe to open at: at most 60 °C');
    await panel.scrollIntoViewIfNeeded();
    await j.shot('hold-settings-refused');
    await page.getByTestId('hold-safe-to-open').fill(String(next));
    await page.getByTestId('hold-save').click();
    await expect(page.getByTestId('hold-safe-value')).toContainText(`${next} °C`);
    await expect(panel).toContainText(/Changed .* by /);
    await j.checkA11y('hold settings');
    await j.shot('hold-settings-saved');
  },
};
