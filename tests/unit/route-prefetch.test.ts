/**
 * The entry's route prefetch (components/common/route-prefetch.ts) must name the route files the
 * router will ask for: the root layout, the signed-in shell and the opened page's own file.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { ROLE_HOME } from '@/shared/roles';
import { routeFilesFor, SHELL_PAGES } from '@/components/common/route-prefetch';

const appDir = path.join(__dirname, '../../app');

describe('route prefetch', () => {
  it('names only route files that exist under app/', () => {
    const files = new Set(['/', '/sign-in', ...SHELL_PAGES.map((p) => `/${p}`)].flatMap(routeFilesFor));
    expect(files.size).toBe(SHELL_PAGES.length + 3);
    for (const f of files) expect(fs.existsSync(path.join(appDir, f))).toBe(true);
  });

  it("covers every role's start page", () => {
    for (const home of Object.values(ROLE_HOME)) expect(routeFilesFor(home)).toContain(`./(shell)${home}.tsx`);
  });

  it('root + shell + page on a page; root + sign-in on /sign-in; no page guessed deeper down or for unknown paths', () => {
    expect(routeFilesFor('/floor')).toEqual(['./_layout.tsx', './(shell)/_layout.tsx', './(shell)/floor.tsx']);
    expect(routeFilesFor('/floor/')).toHaveLength(3);
    expect(routeFilesFor('/sign-in')).toEqual(['./_layout.tsx', './sign-in.tsx']);
    expect(routeFilesFor('/floor/R-07')).toEqual(['./_layout.tsx', './(shell)/_layout.tsx']);
    expect(routeFilesFor('/nowhere')).toHaveLength(2);
    expect(routeFilesFor('/')).toEqual(['./_layout.tsx']);
  });
});
