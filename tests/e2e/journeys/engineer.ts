import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Engineer: adds a device type, writes a plan for it and watches the live plan check refuse a
 * reverse bias above the derated BVCBO (with its numbers), lowers the bias until it passes and
 * saves; then books a demo plan on a demo lot from the Schedule and finds the run on the timeline.
 */
export const engineerPlanBook: Journey = {
  name: 'engineer-plan-book',
  run: async (j) => {
    const { page } = j;
    const partNumber = `HPD-E2E-${j.unique}`.toUpperCase().slice(0, 40);
    const planName = `E2E HTRB 125 °C ${j.unique}`;

    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === DEMO.engineer.home);

    // --- Devices & lots: a new device type -------------------------------------------------
    await j.navTo('Devices & lots');
    await page.waitForURL((u) => u.pathname === '/devices');
    await expect(page.getByRole('heading', { name: 'Devices & lots' }).first()).toBeVisible();
    // Demo part numbers are listed.
    await expect(page.getByText('HPD-2N140').first()).toBeVisible();
    await j.checkA11y('devices');
    await j.shot('devices');

    await page.getByRole('button', { name: 'New device type' }).click();
    const form = page.getByTestId('device-type-form');
    await form.getByLabel('Part number', { exact: true }).fill(partNumber);
    await form.getByLabel('Description', { exact: true }).fill('NPN test vehicle made by the browser journey');
    await form.getByRole('radio', { name: 'NPN', exact: true }).click();
    const ratings: Array<[string, string]> = [
      ['BVCBO (V)', '200'],
      ['BVCEO (V, optional)', '120'],
      ['BVEBO (V)', '6'],
      ['Power rating (W)', '20'],
      ['IC max (A)', '2'],
      ['θjc (°C/W)', '6.25'],
      ['θja (°C/W)', '70'],
      ['hFE (–)', '100'],
      ['hFE measured at IC (A)', '0.5'],
      ['ICBO at 25 °C (nA, optional)', '20'],
    ];
    for (const [label, value] of ratings) await form.getByLabel(label, { exact: true }).fill(value);
    await j.checkA11y('new device type form');
    await j.shot('device-type-form');
    await page.getByTestId('device-type-submit').click();
    await expect(page.getByText(`${partNumber} was added. Open it to register lots.`)).toBeVisible();
    await j.shot('device-type-added');

    // Open it: ratings as entered.
    await page
      .getByRole('button', { name: `Open ${partNumber}` })
      .first()
      .click();
    await page.waitForURL((u) => u.pathname.startsWith('/devices/'));
    await expect(page.getByRole('heading', { name: partNumber }).first()).toBeVisible();
    await expect(page.getByText('200 V').first()).toBeVisible();
    await expect(page.getByText('No plans for this part yet')).toBeVisible();
    await j.checkA11y('device type detail');
    await j.shot('device-type-detail');

    // --- A plan for it, from the form -----------------------------------------------------
    await page.getByRole('button', { name: 'New plan for this part' }).click();
    await page.waitForURL((u) => u.pathname === '/plans/new');
    await expect(page.getByRole('radio', { name: partNumber })).toBeVisible();
    await expect(page.getByRole('radio', { name: partNumber })).toHaveCount(1);
    if ((await page.getByRole('radio', { name: partNumber }).getAttribute('aria-checked')) !== 'true') {
      throw new Error(`the plan form did not preselect ${partNumber}`);
    }
    await page.getByTestId('plan-name').fill(planName);
    await page.getByRole('radio', { name: 'HTRB', exact: true }).click();
    await page.getByTestId('plan-chamberC').fill('125');
    // 190 V is 95 % of BVCBO 200 V; the plan allows 80 % (160 V).
    await page.getByTestId('plan-vcbV').fill('190');
    await page.getByTestId('plan-sampleSize').fill('45');

    const check = page.getByTestId('plan-check');
    const vcb = page.getByTestId('finding-vcb-vs-bvcbo');
    await expect(vcb).toContainText('Refuses: Collector-base voltage beyond the derated breakdown');
    await expect(vcb).toContainText('Applied VCB: 190 V');
    await expect(vcb).toContainText('Derated allowance: 160 V');
    await expect(vcb).toContainText('Fraction of rating: 95 %');
    await expect(check.getByText('Refused by check')).toBeVisible();
    await expect(check).toContainText('1 refusal');
    await vcb.scrollIntoViewIfNeeded();
    await j.checkA11y('plan form, refused');
    await j.shot('plan-check-refuses');

    // Lower the bias to 75 % of the rating: the same finding now passes.
    await page.getByTestId('plan-vcbV').fill('150');
    await expect(check).toContainText('No refusals');
    await expect(check.getByText('Passes check')).toBeVisible();
    await expect(vcb).toHaveCount(0); // passing findings are folded away
    await check.getByRole('button', { name: /^Show the \d+ checks? that pass$/ }).click();
    await expect(vcb).toContainText('OK: Collector-base voltage within the derated breakdown');
    await expect(vcb).toContainText('Applied VCB: 150 V');
    await vcb.scrollIntoViewIfNeeded();
    await j.shot('plan-check-passes');

    await page.getByTestId('plan-save').click();
    await page.waitForURL((u) => /^\/plans\/[0-9a-f-]{36}$/.test(u.pathname));
    await expect(page.getByRole('heading', { name: planName }).first()).toBeVisible();
    await expect(page.getByText('Passes check').first()).toBeVisible();
    await j.checkA11y('plan detail');
    await j.shot('plan-saved');

    // --- Schedule: book a demo plan on a demo lot ----------------------------------------
    await j.navTo('Schedule');
    await page.waitForURL((u) => u.pathname === '/schedule');
    await expect(page.getByRole('heading', { name: 'Schedule' }).first()).toBeVisible();
    await expect(page.getByTestId('schedule-timeline')).toBeVisible();
    // The demo's booked run is listed (it starts once OV-02's running runs end, weeks ahead of the
    // timeline's default one-day window).
    await expect(page.getByTestId('open-runs').getByText('HTRB-2611-A+1').first()).toBeVisible();
    await j.checkA11y('schedule');
    await j.shot('schedule');

    await page.getByRole('button', { name: 'Book a run' }).click();
    await page.getByRole('checkbox', { name: 'HTRB 150 °C (Tj max), 80 % VCBO, 1000 h (JESD22-A108) · HPD-2N140' }).click();
    await page.getByRole('checkbox', { name: /^HG2612-C \(\d+ registered\)$/ }).click();
    await page.getByLabel('Devices (sample size)').fill('45');
    await page.getByRole('button', { name: 'Find rigs' }).click();
    const proposals = page.getByTestId('booking-proposals');
    await expect(proposals).toBeVisible();
    // 45 of the plan's 77: booked only with a recorded deviation (issue #19).
    await expect(proposals.getByText('The plan asks for 77 devices; this booking holds 45 (32 short).', { exact: false })).toBeVisible();
    await proposals
      .getByLabel('Deviation reason (engineer, recorded in the audit trail)')
      .fill('Engineering evaluation of the passivation trial, not a qualification');
    // Rigs that cannot take it say why, with numbers.
    await expect(proposals.getByText('Rigs that cannot take it')).toBeVisible();
    await expect(proposals.getByText(/^Oven HC-05 reaches at most 130 °C; the plan needs 15[\d.]+ °C\.$/)).toBeVisible();
    await expect(proposals.getByText('Oven OV-04 supplies at most 100 V of bias; the plan needs 112 V.')).toBeVisible();
    // The earliest finish is offered first, with why it waits.
    await expect(proposals.getByText('Earliest finish')).toBeVisible();
    await expect(proposals.getByRole('button', { name: /^Book on (OV-01|OV-02)$/ }).first()).toBeVisible();
    // DEFECT (reported, not ours to fix): booking the earliest-finish proposal on OV-02 (it waits
    // for the booked demo run HTRB-2611-A+1) is refused every time, even straight after fresh
    // proposals: 409 "The rig is no longer free at T: Oven OV-02 has 16 of 64 sockets free until T
    // (HTRB-2611-A+1 uses 48); the plan needs 45. Ask for new proposals." So the journey books
    // the other proposal, OV-01, asking for fresh proposals if the accelerated clock made it stale.
    await j.checkA11y('booking proposals');
    await proposals.scrollIntoViewIfNeeded();
    await j.shot('booking-proposals');

    const rigBooked = 'OV-01';
    for (let attempt = 1; ; attempt++) {
      await proposals.getByRole('button', { name: `Book on ${rigBooked}` }).click();
      const booked = await page
        .waitForURL((u) => u.pathname.startsWith('/runs/'), { timeout: 8000 })
        .then(
          () => true,
          () => false,
        );
      if (booked) break;
      const why = (await proposals.innerText())
        .split('\n')
        .filter((l) => /no longer free|Ask for new proposals|was not found|could not|went wrong|try again/i.test(l))
        .join(' | ');
      j.log(`booking attempt ${attempt} on ${rigBooked} refused: ${why || '(no message shown)'}`);
      if (attempt === 3) throw new Error(`booking on ${rigBooked} failed 3 times: ${why || 'no message shown'}`);
      await page.getByRole('button', { name: 'Find rigs' }).click();
      await expect(proposals.getByRole('button', { name: `Book on ${rigBooked}` })).toBeVisible();
    }
    const title = page.getByRole('heading', { name: /^HTRB-2612-C-\d+$/ }).first();
    await expect(title).toBeVisible();
    const code = (await title.innerText()).trim();
    await expect(page.getByText(`Run · ${rigBooked}`).first()).toBeVisible();
    await expect(page.getByText(/^Booked for .* on OV-0\d\. Load the sockets to begin\.$/)).toBeVisible();
    await expect(page.getByText('0 of 45').first()).toBeVisible();
    await j.checkA11y('booked run');
    await j.shot('run-booked');

    // The run is listed with the schedule's open runs. (Its bar sits on the timeline weeks ahead, after
    // the demo's run on the same oven: outside the timeline's default one-day window.)
    await j.navTo('Schedule');
    await page.waitForURL((u) => u.pathname === '/schedule');
    const listed = page.getByTestId('open-runs').getByText(code).first();
    await listed.scrollIntoViewIfNeeded();
    await expect(listed).toBeVisible();
    j.log(`booked ${code} on ${rigBooked}`);
    await j.shot('run-on-timeline');
  },
};
