import { expect } from './expect';
import type { Journey } from '../harness';

export const DEMO = {
  admin: { email: 'admin@harrowgate-lab.example', password: 'harrow-admin-1', home: '/people', heading: 'People' },
  engineer: { email: 'engineer@harrowgate-lab.example', password: 'harrow-engineer-1', home: '/plans', heading: 'Plans' },
  operator: { email: 'operator@harrowgate-lab.example', password: 'harrow-operator-1', home: '/floor', heading: 'Floor' },
  manager: { email: 'manager@harrowgate-lab.example', password: 'harrow-manager-1', home: '/trends', heading: 'Lot trends' },
} as const;

/** Each role signs in, lands on its own home and sees only its own places. */
export const signInEveryRole: Journey = {
  name: 'sign-in-roles',
  run: async (j) => {
    const { page } = j;
    await page.goto(`${j.baseUrl}/sign-in`);
    await expect(page.getByRole('button', { name: 'Sign in' })).toBeVisible();
    await j.checkA11y('sign-in');
    await j.shot('sign-in');
    for (const [role, u] of Object.entries(DEMO)) {
      await page.context().clearCookies();
      await j.signIn(u.email, u.password);
      await page.waitForURL((url) => url.pathname === u.home, { timeout: 20000 });
      await expect(page.getByRole('heading', { name: u.heading }).first()).toBeVisible();
      // Places of other roles are not offered.
      if (role !== 'admin') await expect(page.getByRole('link', { name: 'People' })).toHaveCount(0);
      if (role === 'admin') await expect(page.getByRole('link', { name: 'Plans' })).toHaveCount(0);
      await j.checkA11y(`${role} home`);
      await j.shot(`${role}-home`);
    }
  },
};

/** Wrong password and a direct visit while signed out each get a clear message. */
export const signInErrors: Journey = {
  name: 'sign-in-errors',
  run: async (j) => {
    const { page } = j;
    await page.goto(`${j.baseUrl}/plans`);
    await page.waitForURL((url) => url.pathname === '/sign-in');
    await j.signIn(DEMO.operator.email, 'not-the-password');
    await expect(page.getByText('Wrong e-mail or password.')).toBeVisible();
    await j.shot('wrong-password');
  },
};

/** Admin adds a person, changes the role, deactivates; the deactivated person cannot sign in. */
export const adminPeople: Journey = {
  name: 'admin-people',
  run: async (j) => {
    const { page } = j;
    const email = `e2e-${j.unique}@harrowgate-lab.example`;
    const name = `Rowan Tesk ${j.size}`;
    await j.signIn(DEMO.admin.email, DEMO.admin.password);
    await page.waitForURL((url) => url.pathname === '/people');
    await page.getByRole('button', { name: 'Add person' }).first().click();
    await page.getByLabel('Full name').fill(name);
    await page.getByLabel('E-mail').fill(email);
    await page
      .getByRole('radio', { name: 'Floor operator' })
      .or(page.getByRole('button', { name: 'Floor operator' }))
      .first()
      .click();
    await page.getByLabel('First password').fill('a-long-first-password');
    await j.shot('add-person-form');
    await page.getByTestId('add-person-submit').click();
    await expect(page.getByText(email).first()).toBeVisible();
    await j.shot('person-added');

    // The whole address is shown (it was cut with an ellipsis at 1440 px).
    const cut = await page
      .getByText(email, { exact: true })
      .first()
      .evaluate((el) => el.scrollWidth > el.clientWidth + 1 || el.scrollHeight > el.clientHeight + 1);
    if (cut) throw new Error(`the e-mail address ${email} is cut off`);
    // Search by name, e-mail or role (in the browser: the list is loaded whole).
    await page.getByTestId('people-search').fill(`e2e-${j.unique}`);
    await expect(page.getByTestId('people-table')).toContainText(email);
    await expect(page.getByTestId('people-table')).toContainText(name);
    if ((await page.getByTestId('people-table').innerText()).includes(DEMO.engineer.email))
      throw new Error('search kept a person who does not match');
    await j.shot('people-search');
    await page.getByTestId('people-search').fill('nobody-has-this-name');
    await expect(page.getByText('Nobody matches')).toBeVisible();
    await page.getByTestId('people-search').fill('');

    await page.getByRole('button', { name: `Change role of ${name}` }).click();
    const roleDialog = page.getByRole('dialog');
    await roleDialog
      .getByRole('radio', { name: 'Quality manager' })
      .or(roleDialog.getByRole('button', { name: 'Quality manager' }))
      .first()
      .click();
    await roleDialog.getByRole('button', { name: 'Save role' }).click();
    await expect(page.getByRole('dialog')).toHaveCount(0);

    await page
      .getByRole('button', { name: new RegExp(`^Deactivate ${name}$`) })
      .or(page.getByRole('button', { name: `Deactivate` }).last())
      .first()
      .click();
    await page.getByRole('dialog').getByRole('button', { name: 'Deactivate' }).click();
    await expect(page.getByRole('dialog')).toHaveCount(0);
    await j.shot('person-deactivated');

    await page.context().clearCookies();
    await j.signIn(email, 'a-long-first-password');
    await expect(page.getByText('This account is deactivated. Ask an administrator.')).toBeVisible();
    await j.shot('deactivated-refused');
  },
};
