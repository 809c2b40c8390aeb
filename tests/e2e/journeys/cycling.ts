import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

const BENCH = 'CY-07';
const RUN = 'IOL-2605-J';
/** The demo seeds the run at 1,800 credited cycles (server/seed/seed-runs.ts). */
const SEEDED_CYCLES = 1800;

const cyclesOf = (text: string): number => {
  const m = text.match(/^([\d,]+) \/ 15,000$/);
  if (!m) throw new Error(`the run shows no cycle count of 15,000: "${text}"`);
  return Number(m[1].replace(/,/g, ''));
};

/**
 * Operator: the power-cycling bench's socket detail with its cycles and junction swing, then the
 * IOL run's page counting cycles (done / target, the ΔTj band, each socket's last swing) while the
 * simulated bench cycles — the count rises above what the demo seeded. Reads only; no data changed.
 */
export const operatorCycling: Journey = {
  name: 'operator-cycling',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname === '/floor');

    // --- The bench: a socket's cycles and last swing ---------------------------------------
    const tile = page.getByTestId(`rig-tile-${BENCH}`);
    await expect(tile).toBeVisible(30000);
    await expect(tile).toContainText(`Run ${RUN}`);
    await tile.click();
    await page.waitForURL((u) => u.pathname === `/floor/${BENCH}`);
    await expect(page.getByTestId('socket-board')).toBeVisible();
    await page.getByRole('button', { name: /^Socket 0, / }).click();
    const detail = page.getByTestId('socket-detail');
    await expect(detail).toContainText(/Cycles\s*[\d,]+ \/ 15,000/);
    await expect(detail).toContainText(/Last ΔTj \(from the TSP\)\s*(\d+(\.\d)?(–\d+(\.\d)?)? K|—)/);
    await j.checkA11y('cycling bench');
    await detail.scrollIntoViewIfNeeded();
    await j.shot('bench-socket-cycles');

    // --- The run: cycles counted while the bench cycles -------------------------------------
    await j.navTo('Schedule');
    await page.waitForURL((u) => u.pathname === '/schedule');
    await page.getByRole('button', { name: `Open run ${RUN}`, exact: true }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/runs/'));
    await expect(page.getByRole('heading', { name: RUN }).first()).toBeVisible();
    const count = page.getByTestId('run-cycles');
    await expect(count).toBeVisible(30000);
    const first = cyclesOf(await count.innerText());
    if (first < SEEDED_CYCLES) throw new Error(`${RUN} shows ${first} cycles, fewer than the ${SEEDED_CYCLES} seeded`);
    await expect(page.getByText(/A cycle counts when its junction swing is 100 K to 125 K/)).toBeVisible();
    // The simulated bench completes a cycle every ~2 wall seconds once biased: wait for the count to rise.
    let now = first;
    for (let i = 0; i < 60 && now <= SEEDED_CYCLES; i++) {
      await page.waitForTimeout(1000);
      await page.reload();
      await expect(count).toBeVisible(30000);
      now = cyclesOf(await count.innerText());
    }
    if (now <= SEEDED_CYCLES) throw new Error(`${RUN} stayed at ${now} cycles for a minute: the bench is not counting`);
    await expect(page.getByTestId('run-last-swing')).toContainText(/^\d+(\.\d)?(–\d+(\.\d)?)? K$/);
    const swing = await page.getByTestId('run-last-swing').innerText();
    const high = Number(swing.replace(' K', '').split('–').pop());
    if (!(high >= 100 && high <= 125)) throw new Error(`the last swing ${swing} lies outside the 100–125 K band`);
    j.log(`${RUN}: ${first} → ${now} cycles, last ΔTj ${swing}`);
    await j.checkA11y('cycling run');
    await j.shot('run-cycles');
    await page.getByText('Cycles · last ΔTj').first().scrollIntoViewIfNeeded();
    await j.shot('run-socket-cycles');
  },
};
