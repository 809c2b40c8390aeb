/**
 * The permission table drives the API: change one entry (managers may book runs) and the route's
 * answer changes with it. tests/app/permissions.test.tsx makes the same change and watches the
 * Schedule screen's "Book a run" button follow.
 */
import { can, rolesFor } from '../../shared/domain/permissions';
import { createTestApp, type TestApp } from '../support/api';
import { BOOKING_OVERRIDE, withPermission } from '../support/permission-override';

jest.setTimeout(120_000);

const bookAs = async (t: TestApp) => (await t.signIn('manager')).post('/api/runs').send({});

test('as declared: a manager may not book a run', async () => {
  expect(can('manager', 'run.book')).toBe(false);
  const t = await createTestApp();
  try {
    const res = await bookAs(t);
    expect(res.status).toBe(403);
    expect(res.body.error).toMatchObject({ code: 'forbidden', message: 'This needs the engineer role; you are signed in as manager.' });
  } finally {
    await t.close();
  }
});

test('with the table changed to let managers book, the same request passes the access check', async () => {
  await withPermission(BOOKING_OVERRIDE.action, BOOKING_OVERRIDE.roles, async () => {
    expect(rolesFor('run.book')).toEqual(['engineer', 'manager']);
    const t = await createTestApp();
    try {
      expect(t.routes.find((r) => r.method === 'post' && r.path === '/api/runs/')?.access).toEqual(['engineer', 'manager']);
      const res = await bookAs(t);
      // Past the access check, the empty body is refused by the zod schema instead.
      expect(res.status).toBe(400);
      expect(res.body.error).toMatchObject({ code: 'bad_request' });
      expect(res.body.error.message).toMatch(/^The request body is not valid \(planId: /);
    } finally {
      await t.close();
    }
  });
  expect(can('manager', 'run.book')).toBe(false);
});
