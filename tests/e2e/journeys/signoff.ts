import type { Page } from 'playwright-core';
import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/** A JSON request from inside the page (same origin, the session's cookie), as the app sends it. */
async function inPage<T>(page: Page, method: string, path: string, body?: unknown): Promise<{ status: number; body: T }> {
  const r = await page.evaluate(
    async ([m, p, b]) => {
      const res = await fetch(p as string, {
        method: m as string,
        credentials: 'include',
        headers: { 'Content-Type': 'application/json', Accept: 'application/json' },
        body: b === undefined ? undefined : JSON.stringify(b),
      });
      return { status: res.status, body: await res.json().catch(() => null) };
    },
    [method, path, body] as const,
  );
  // The journey knows the shape it asked for; a wrong guess fails the steps that read it.
  return r as { status: number; body: T };
}

/**
 * Records that hold up in an audit (issue #21 items 3–5): an admin grants the safety approval; an
 * engineer asks to book a blocked plan (a plan of its own, made here); the manager approves it from
 * the queue; the engineer's booking panel then shows the approval. The manager signs the failed
 * lot HG2610-E's verdict (a wrong password first), a disposition recorded afterwards flags the
 * signature as needing a new one, and the audit log view filters, shows the entries and checks
 * the hash chain.
 */
export const signoffApprovalsAudit: Journey = {
  name: 'signoff-approvals-audit',
  run: async (j) => {
    const { page } = j;
    const planName = `HTRB 160 °C margin study ${j.unique}`;

    // --- Admin: grant the safety approval to the quality manager -----------------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.admin.email, DEMO.admin.password);
    await page.waitForURL((u) => u.pathname === '/people');
    // Both sizes run on one demo database: the phone run grants it, the wide run finds it granted.
    const grant = page.getByRole('button', { name: 'Grant the safety approval to Henrik Aldous' }).first();
    await expect(grant.or(page.getByRole('button', { name: 'Withdraw the safety approval of Henrik Aldous' }))).toBeVisible();
    if (await grant.isVisible()) {
      await grant.click();
      await expect(page.getByText("Henrik Aldous may now approve other people's safety overrides.")).toBeVisible();
    }
    await expect(page.getByTestId(`approver-${DEMO.manager.email}`)).toBeVisible();
    await j.checkA11y('people: safety approval');
    await j.shot('grant-approval');

    // --- Engineer: a plan the check blocks (chamber above Tj max), and the override request ----
    await page.context().clearCookies();
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === '/plans');
    const types = await inPage<{ items: Array<{ id: string; partNumber: string }> }>(page, 'GET', '/api/device-types');
    const type = types.body.items.find((t) => t.partNumber === 'HPD-2N140');
    if (!type) throw new Error('no demo device type HPD-2N140');
    const plan = await inPage<{ id: string; checkStatus: string }>(page, 'POST', '/api/plans', {
      name: planName,
      kind: 'htrb',
      deviceTypeId: type.id,
      chamberC: 160,
      bias: { vcbV: 112 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: 8,
      acceptNumber: 0,
      criteria: {},
    });
    if (plan.status !== 201 || plan.body.checkStatus !== 'block')
      throw new Error(`blocked plan: ${plan.status} ${JSON.stringify(plan.body)}`);
    const openBooking = async () => {
      // A fresh load: the plan list was read before the plan above was made.
      await page.goto(`${j.baseUrl}/schedule`);
      await page.getByRole('button', { name: 'Book a run' }).click();
      await page.getByRole('checkbox', { name: `${planName} · HPD-2N140` }).click();
      await page.getByRole('checkbox', { name: /^HG2611-B \(\d+ registered\)$/ }).click();
      await page.getByLabel('Devices (sample size)').fill('8');
      await page.getByRole('button', { name: 'Find rigs' }).click();
      const proposals = page.getByTestId('booking-proposals');
      await expect(proposals).toBeVisible();
      await expect(proposals.getByText('The plan check blocks this plan')).toBeVisible();
      return proposals;
    };
    let proposals = await openBooking();
    await proposals
      .getByLabel("Why this plan may run anyway (sent for a second person's approval)")
      .fill('Margin study for the customer: these eight parts are sacrificial.');
    await proposals.getByRole('button', { name: 'Ask for an override' }).click();
    await expect(proposals.getByTestId('override-pending')).toBeVisible();
    await expect(proposals.getByText('Waiting for approval')).toBeVisible();
    await proposals.getByTestId('override-pending').scrollIntoViewIfNeeded();
    await j.checkA11y('booking: override requested');
    await j.shot('override-requested');

    // --- Manager: the approver's queue --------------------------------------------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    await j.navTo('Approvals');
    await page.waitForURL((u) => u.pathname === '/approvals');
    const queue = page.getByTestId('approvals-queue');
    const card = queue.getByLabel(`Override request for ${planName}`, { exact: true });
    await expect(card).toBeVisible();
    await expect(card).toContainText('Chamber hotter than the junction rating');
    await expect(card).toContainText('Chamber set point 160 °C');
    await expect(card).toContainText('Asked by Tobias Renwick');
    await j.checkA11y('approvals queue');
    await j.shot('approvals-queue');
    await card.getByRole('button', { name: 'Approve override' }).click();
    const decided = page.getByTestId('approvals-decided');
    await expect(decided.getByText(/^Approved by Henrik Aldous, /).first()).toBeVisible();
    await j.shot('override-approved');

    // --- Engineer: the booking panel now books with the approval --------------------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === '/plans');
    proposals = await openBooking();
    await expect(proposals.getByTestId('override-approved')).toBeVisible();
    await expect(proposals.getByTestId('override-approved')).toContainText('Approved by Henrik Aldous');
    await proposals.getByTestId('override-approved').scrollIntoViewIfNeeded();
    await j.shot('booking-with-approval');

    // --- Manager: sign the failed lot's verdict -----------------------------------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    const lots = await inPage<{ items: Array<{ lotId: string; lotCode: string; verdict: string; run: { id: string } | null }> }>(
      page,
      'GET',
      '/api/analytics/lots',
    );
    const lotE = lots.body.items.find((l) => l.lotCode === 'HG2610-E');
    if (!lotE || lotE.verdict !== 'failed') throw new Error(`HG2610-E: ${JSON.stringify(lotE)}`);
    await page.goto(`${j.baseUrl}/trends/lots/${lotE.lotId}`);
    const signoff = page.getByTestId('verdict-signoff');
    await expect(signoff).toBeVisible(30000);
    // (The wide run finds the phone run's signature, flagged since; it signs again.)
    await signoff.getByTestId('sign-open').click();
    await signoff.getByRole('radio', { name: 'Approved for release' }).click();
    await signoff.getByLabel('Your password').fill('not-my-password');
    await signoff.getByTestId('sign-submit').click();
    await expect(signoff.getByTestId('sign-error')).toContainText('Wrong password: nothing was signed.');
    await signoff.scrollIntoViewIfNeeded();
    await j.shot('sign-wrong-password');
    await signoff.getByLabel('Your password').fill(DEMO.manager.password);
    await signoff.getByTestId('sign-submit').click();
    await expect(signoff.getByTestId('signature-valid')).toBeVisible();
    await expect(signoff).toContainText('Henrik Aldous (manager@harrowgate-lab.example)');
    await expect(signoff).toContainText(/Approved for release · verdict failed · /);
    await expect(signoff).toContainText(/SHA-256 [0-9a-f]{64}/);
    await j.checkA11y('lot verdict signed');
    await j.shot('verdict-signed');

    // --- Data under the signed verdict changes: a disposition recorded afterwards --------------
    await page.context().clearCookies();
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === '/plans');
    const detail = await inPage<{ devices: Array<{ serial: string; status: string }> }>(page, 'GET', `/api/analytics/lots/${lotE.lotId}`);
    let recorded = false;
    for (const d of detail.body.devices.filter((x) => x.status === 'pass').slice(0, 12)) {
      const r = await inPage(page, 'POST', `/api/evidence/runs/${lotE.run!.id}/dispositions`, {
        serial: d.serial,
        readPointH: 1000,
        kind: 'damaged',
        reason: `Lead bent when unloading (${j.unique})`,
      });
      if (r.status === 201) {
        j.log(`disposition recorded for ${d.serial}`);
        recorded = true;
        break;
      }
    }
    if (!recorded) throw new Error('could not record a disposition on HG2610-E');
    await page.context().clearCookies();
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    await page.goto(`${j.baseUrl}/trends/lots/${lotE.lotId}`);
    await expect(page.getByTestId('signoff-stale')).toBeVisible(30000);
    await expect(page.getByTestId('signoff-stale')).toContainText('Needs a new signature');
    await expect(page.getByTestId('signature-stale')).toContainText('Data changed since signing');
    await page.getByTestId('verdict-signoff').scrollIntoViewIfNeeded();
    await j.shot('signature-needs-renewal');

    // --- The audit log: filter by person and object, and check the chain ----------------------
    await j.navTo('Audit log');
    await page.waitForURL((u) => u.pathname === '/audit');
    await page.getByLabel('Person (name or e-mail)').fill('Henrik');
    await page.getByLabel('Object (plan, run, lot, user…)').fill('plan');
    await page.getByTestId('audit-apply').click();
    const table = page.getByTestId('audit-table');
    await expect(table).toContainText('override.approve');
    await expect(page.getByTestId('audit-count')).toContainText(/\d+ entr(y|ies)\./);
    await page.getByTestId('audit-verify').click();
    await expect(page.getByTestId('audit-chain-ok')).toContainText(/Chain intact: \d+ entries/);
    await j.checkA11y('audit log');
    await j.shot('audit-log');
  },
};
