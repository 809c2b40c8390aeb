import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Manager: a lot's failure rate names its mechanism and is credited at the measured junction.
 * The powered-life lot HG2609-D ran on a heat-sunk board: its FIT uses the junction its sockets'
 * telemetry showed (≈ 35 °C), not the plan's free-air prediction (≈ 145 °C). The humidity lot
 * HG2608-F is credited by Peck with its model parameters named. QUAL-002's group C life lot
 * HG2606-K ran on a free-air board: its junction is the plan's stated Tj and its FIT tens of FIT.
 * Reads only (changes nothing).
 */
export const managerLotCredit: Journey = {
  name: 'manager-lot-credit',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    const list = await page.request.get(`${j.baseUrl}/api/analytics/lots`);
    if (list.status() !== 200) throw new Error(`lot list: ${list.status()}`);
    const lots = (await list.json()).items as Array<{ lotId: string; lotCode: string }>;
    const open = async (code: string) => {
      const lot = lots.find((l) => l.lotCode === code);
      if (!lot) throw new Error(`no demo lot ${code}`);
      await page.goto(`${j.baseUrl}/trends/lots/${lot.lotId}`);
      await expect(page.getByRole('heading', { name: code }).first()).toBeVisible(30000);
      return lot;
    };

    // --- Powered life on a heat-sunk board: temperature (Arrhenius) at the measured junction ----
    const d = await open('HG2609-D');
    const mechanism = page.getByTestId('fit-mechanism');
    await expect(mechanism).toBeVisible();
    await expect(mechanism).toContainText('Temperature (Arrhenius)');
    const junction = page.getByTestId('fit-junction');
    await expect(junction).toContainText('estimated junction from socket telemetry');
    const jText = await junction.innerText();
    const mean = Number(jText.match(/mean (\d+(?:\.\d+)?) °C/)?.[1]);
    if (!(mean > 25 && mean < 45)) throw new Error(`HG2609-D's junction over its credited hours reads "${jText}"`);
    // The page shows what the API computed, and the API credits the measured junction.
    const detail = await (await page.request.get(`${j.baseUrl}/api/analytics/lots/${d.lotId}`)).json();
    if (detail.fit.mechanism !== 'temperature' || Math.abs(detail.fit.junction.tjMeanC - mean) > 0.05)
      throw new Error(`API fit ${JSON.stringify(detail.fit.junction)} vs page mean ${mean}`);
    await expect(page.getByTestId('fit60')).toBeVisible();
    // A 35 °C junction against a 55 °C use temperature decelerates: the page says so.
    await expect(page.getByTestId('fit-decelerated')).toContainText('below the use temperature (55 °C)');
    await expect(page.getByTestId('fit-model')).toContainText('Ea 0.7 eV (plan)');
    await page.getByTestId('fit-model').scrollIntoViewIfNeeded();
    await j.checkA11y('lot failure rate: temperature');
    await j.shot('fit-temperature');
    j.log(`HG2609-D: mean junction ${mean} °C, FIT 60 % ${detail.fit.fit60}`);

    // --- Powered life on a free-air board (QUAL-002's group C life, HOTL-2606-K): credited at -----
    // the junction its plan states, so its FIT is a life test's (tens of FIT), not the heat-sunk 10^5.
    const k = await open('HG2606-K');
    const kDetail = await (await page.request.get(`${j.baseUrl}/api/analytics/lots/${k.lotId}`)).json();
    const life = (
      kDetail.plans as Array<{ kind: string; planName: string; fit: { fit60: number; junction: { tjMeanC: number } } | null }>
    ).find((p) => p.kind === 'hotl');
    if (!life?.fit) throw new Error('HG2606-K has no powered-life FIT');
    const stated = Number(life.planName.match(/Tj (\d+) °C/)?.[1]);
    if (!(Math.abs(life.fit.junction.tjMeanC - stated) < 0.5))
      throw new Error(`HG2606-K's junction ${life.fit.junction.tjMeanC} °C vs the plan's stated Tj ${stated} °C`);
    if (!(life.fit.fit60 > 10 && life.fit.fit60 < 1000)) throw new Error(`HG2606-K's life FIT at 60 % is ${life.fit.fit60}`);
    const lifeFit = page
      .getByTestId('plan-fit')
      .filter({ hasText: `Temperature (Arrhenius) FIT ${+life.fit.fit60.toPrecision(3)} at 60 %` });
    await expect(lifeFit).toHaveCount(1);
    await lifeFit.scrollIntoViewIfNeeded();
    await j.checkA11y('lot failure rate: powered life at its junction');
    await j.shot('fit-life-free-air');
    j.log(`HG2606-K (HOTL-2606-K): mean junction ${life.fit.junction.tjMeanC} °C (plan Tj ${stated} °C), FIT 60 % ${life.fit.fit60}`);

    // --- Temperature-humidity-bias: humidity (Peck), parameters named --------------------------
    await open('HG2608-F');
    await expect(page.getByTestId('fit-mechanism')).toContainText('Humidity (Peck)');
    const model = page.getByTestId('fit-model');
    await expect(model).toContainText('n 2.66 (assumed, from memory)');
    await expect(model).toContainText('use humidity 60 % RH');
    await expect(page.getByTestId('plan-fit').first()).toContainText('Humidity (Peck) FIT');
    await model.scrollIntoViewIfNeeded();
    await j.checkA11y('lot failure rate: humidity');
    await j.shot('fit-humidity');

    // --- The part's record: one FIT per mechanism, none pooled ---------------------------------
    const types = await (await page.request.get(`${j.baseUrl}/api/analytics/device-types`)).json();
    const part = (types.items as Array<{ partNumber: string; deviceTypeId: string }>).find((x) => x.partNumber === 'HPD-3P90');
    if (!part) throw new Error('no HPD-3P90 summary');
    await page.goto(`${j.baseUrl}/trends/types/${part.deviceTypeId}`);
    await expect(page.getByTestId('device-type-summary-screen')).toBeVisible(30000);
    const row = page.getByTestId('mechanism-temperature');
    await expect(row).toContainText('Temperature (Arrhenius):');
    await expect(row).toContainText('FIT at 60 %');
    await expect(page.getByTestId('mechanism-humidity')).toHaveCount(0);
    await expect(page.getByText(/One FIT per failure mechanism, never pooled/).first()).toBeVisible();
    await row.scrollIntoViewIfNeeded();
    await j.checkA11y('device type: FIT per mechanism');
    await j.shot('part-fit-per-mechanism');
  },
};
