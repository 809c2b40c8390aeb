/**
 * readApiError (the app's hand check of the error shape) and apiErrorSchema (the server's zod
 * schema) must accept and refuse the same bodies — checked on hand-picked cases and on generated ones.
 */
import { readApiError } from '../../shared/domain/api-error';
import { apiErrorSchema } from '../../shared/schemas/errors';
import { mulberry32 } from '../../shared/random';

const agree = (body: unknown) => {
  const zod = apiErrorSchema.safeParse(body);
  const hand = readApiError(body);
  expect({ body, accepted: hand !== null }).toEqual({ body, accepted: zod.success });
  if (zod.success) expect(hand).toEqual(zod.data.error);
};

describe('readApiError agrees with apiErrorSchema', () => {
  it.each([
    [{ error: { code: 'bad_request', message: 'Enter a part number' } }, true],
    [{ error: { code: 'bad_request', message: 'x', fields: { email: ['Enter an e-mail address'] } } }, true],
    [{ error: { code: 'bad_request', message: 'x', fields: {} } }, true],
    [{ error: { code: 'teapot', message: 'x' } }, false],
    [{ error: { code: 'conflict' } }, false],
    [{ error: { code: 'conflict', message: 3 } }, false],
    [{ error: { code: 'conflict', message: 'x', fields: { a: 'not a list' } } }, false],
    [{ error: { code: 'conflict', message: 'x', fields: { a: [1] } } }, false],
    [{ error: { code: 'conflict', message: 'x', fields: ['a'] } }, false],
    [{ error: 'conflict' }, false],
    [{ error: null }, false],
    [null, false],
    ['text', false],
    [[{ error: { code: 'conflict', message: 'x' } }], false],
  ])('%j → accepted %s', (body, accepted) => {
    expect(readApiError(body) !== null).toBe(accepted);
    agree(body);
  });

  it('agrees on 2,000 generated bodies', () => {
    const rnd = mulberry32(20261204);
    const pick = <T>(xs: T[]): T => xs[Math.floor(rnd() * xs.length)];
    const values: unknown[] = [undefined, null, 0, 'x', [], ['a'], [1], {}, { a: ['b'] }, { a: [2] }, { a: 'b' }, 'internal', 'nope'];
    let accepted = 0;
    for (let i = 0; i < 2000; i++) {
      const error: Record<string, unknown> = {};
      if (rnd() < 0.9) error.code = pick(['bad_request', 'not_found', 'internal', 'teapot', 4, null]);
      if (rnd() < 0.9) error.message = pick(['m', '', 7, null]);
      if (rnd() < 0.5) error.fields = pick(values);
      const body = rnd() < 0.95 ? { error } : pick(values);
      agree(body);
      if (readApiError(body)) accepted++;
    }
    // Both branches exercised: some accepted, some refused.
    expect(accepted).toBeGreaterThan(100);
    expect(accepted).toBeLessThan(1900);
  });
});
