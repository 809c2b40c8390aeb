/**
 * No import cycle between server modules (server/modules/<x> folders) and no run-time import cycle
 * between files of server/, shared/, broker/ and rig-simulator/ (`npm run cycles` prints them).
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { findCycles } from '../../scripts/import-cycles';

describe('import cycles', () => {
  it('there are none in this tree', () => {
    expect(findCycles()).toEqual({ files: [], modules: [] });
  });

  it('finds a module cycle (even through types only) and a run-time file cycle, and ignores type-only file cycles', () => {
    const root = fs.mkdtempSync(path.join(os.tmpdir(), 'emberlot-cycles-'));
    try {
      const put = (rel: string, text: string) => {
        fs.mkdirSync(path.dirname(path.join(root, rel)), { recursive: true });
        fs.writeFileSync(path.join(root, rel), text);
      };
      put('server/modules/a/a.service.ts', "import type { B } from '../b/b.service';\nexport const a = 1;\n");
      put('server/modules/b/b.service.ts', "import { a } from '../a/a.service';\nexport type B = typeof a;\n");
      put('server/x.ts', "import { y } from './y';\nexport const x = y;\n");
      put('server/y.ts', "export { x as y2 } from './x';\nexport const y = 2;\n");
      put('server/t1.ts', "import type { T2 } from './t2';\nexport type T1 = T2;\n");
      put('server/t2.ts', "import type { T1 } from './t1';\nexport type T2 = T1 | 1;\n");
      expect(findCycles(root, ['server'])).toEqual({ files: [['server/x.ts', 'server/y.ts']], modules: [['a', 'b']] });
    } finally {
      fs.rmSync(root, { recursive: true, force: true });
    }
  });
});
