import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

const CHAMBER = 'TC-01';
const VESSEL = 'AC-01';
const RUN = 'TC-2612-C';
/** The demo seeds the run at 20 of 1,000 cycles (server/seed/seed-runs.ts). */
const SEEDED_CYCLES = 20;

const cyclesOf = (text: string): number => {
  const m = text.match(/^([\d,]+) of 1,000$/);
  if (!m) throw new Error(`no cycle count of 1,000: "${text}"`);
  return Number(m[1].replace(/,/g, ''));
};

/**
 * Chambers on the demo floor (issue #22): the operator sees the cycling chamber TC-01 and the
 * autoclave AC-01 on the floor, opens TC-01 (load and air, the programme's step, devices loaded,
 * excursion alarms, the chamber's own caution) and watches the cycle count rise while the simulated
 * chamber cycles; the engineer finds QUAL-001's TC cell on HG2612-C under stress and linked to the
 * running chamber run, and that run's page counting cycles. Reads only; no data changed.
 */
export const chamberFloor: Journey = {
  name: 'chamber',
  run: async (j) => {
    const { page } = j;
    await page.context().clearCookies();
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname === '/floor');

    // --- The floor: both chambers, the cycling one with its run and step ---------------------
    const tile = page.getByTestId(`rig-tile-${CHAMBER}`);
    await expect(tile).toBeVisible(30000);
    await expect(tile).toContainText(`Run ${RUN}`);
    await expect(tile).toContainText(/Devices\s*45/i);
    await expect(tile).toContainText(/Excursions\s*\d+/i);
    await expect(page.getByTestId(`chamber-load-${CHAMBER}`)).toContainText(/^-?\d+\.\d °C$/);
    await expect(page.getByTestId(`chamber-step-${CHAMBER}`)).toContainText(
      /^(Ramp to|Dwell at) the (hot|cold) extreme · cycle [\d,]+ of 1,000$/,
    );
    const vessel = page.getByTestId(`rig-tile-${VESSEL}`);
    await expect(vessel).toBeVisible();
    await expect(vessel).toContainText('No run in this chamber');
    await expect(page.getByTestId('floor-summary')).toContainText(/^\d+ of \d+ rigs online · \d+ running · \d+ open alarms?$/);
    await tile.scrollIntoViewIfNeeded();
    await j.checkA11y('floor with chambers');
    await j.shot('floor-chambers');

    // --- The chamber's page: report, step, cycles moving, caution ----------------------------
    await tile.click();
    await page.waitForURL((u) => u.pathname === `/floor/${CHAMBER}`);
    await expect(page.getByRole('heading', { name: `Chamber ${CHAMBER}` })).toBeVisible();
    const caution = page.getByTestId('chamber-caution');
    await expect(caution).toContainText('hot and frozen surfaces');
    await expect(caution).toContainText('A software alarm is no substitute for the chamber’s own over- and under-temperature protection');
    await expect(caution).toContainText('follow the lab’s safety rules');
    await expect(page.getByTestId('chamber-devices')).toContainText('45 of 160 positions');
    await expect(page.getByTestId('chamber-excursions')).toContainText(/^\d+$/);
    await expect(page.getByTestId('chamber-air')).toContainText(/^-?\d+\.\d °C$/);
    await expect(page.getByTestId('chamber-chart')).toBeVisible(30000);
    const count = page.getByTestId('chamber-cycles');
    await expect(count).toBeVisible();
    const first = cyclesOf(await count.innerText());
    if (first < SEEDED_CYCLES) throw new Error(`${CHAMBER} shows ${first} cycles, fewer than the ${SEEDED_CYCLES} seeded`);
    // A condition-B cycle takes about 16 wall seconds on the demo clock (scripts/demo-fleet.ts): wait for the next.
    let now = first;
    const steps = new Set<string>();
    for (let i = 0; i < 45 && now <= first; i++) {
      await page.waitForTimeout(2000);
      steps.add(await page.getByTestId('chamber-step').innerText());
      now = cyclesOf(await count.innerText());
    }
    if (now <= first) throw new Error(`${CHAMBER} stayed at ${now} cycles for 90 s: the chamber is not counting`);
    j.log(`${CHAMBER}: ${first} → ${now} cycles; steps seen: ${[...steps].join(' | ')}`);
    await j.checkA11y('chamber page');
    await j.shot('chamber-page');
    await page.getByTestId('chamber-chart').scrollIntoViewIfNeeded();
    await j.shot('chamber-chart');

    // --- Engineer: QUAL-001's TC cell linked to the running chamber run ----------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === '/plans');
    await j.navTo('Qualifications');
    await page.waitForURL((u) => u.pathname === '/qualifications');
    await page.getByTestId('qual-item-QUAL-001').click();
    await page.waitForURL((u) => /^\/qualifications\/[0-9a-f-]{36}$/.test(u.pathname));
    const cell = page.getByTestId('qual-cell-tc-HG2612-C');
    await expect(cell).toContainText('Under stress');
    await expect(page.getByTestId('qual-cell-ac-HG2611-A')).toContainText('Not started');
    await cell.click();
    const panel = page.getByTestId('qual-cell-panel');
    await expect(panel).toContainText(`Run ${RUN} · ${CHAMBER} · stressing`);
    await panel.scrollIntoViewIfNeeded();
    await j.shot('qual-tc-cell');
    await panel.getByRole('link', { name: new RegExp(`^Run ${RUN} · ${CHAMBER}`) }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/runs/'));
    await expect(page.getByRole('heading', { name: RUN }).first()).toBeVisible();
    const runCycles = page.getByTestId('run-chamber-cycles');
    await expect(runCycles).toBeVisible(30000);
    const onRun = cyclesOf(await runCycles.innerText());
    if (onRun < now) throw new Error(`the run page shows ${onRun} cycles, fewer than the chamber page's ${now}`);
    await expect(page.getByTestId('run-chamber-load')).toContainText(/^-?\d+(\.\d)? °C$/);
    await j.checkA11y('chamber run');
    await runCycles.scrollIntoViewIfNeeded();
    await j.shot('chamber-run');
  },
};
