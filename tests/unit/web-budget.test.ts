/**
 * The cold sign-in's download budget, read from the web export's files (no browser): the document, the
 * scripts index.html loads, the route chunks of /sign-in, the core Lexend files and the favicon, in brotli
 * bytes as the server sends them, plus an allowance per response for headers (scripts/web-size.ts). The
 * bench's `web` scenario measures the same download in Chromium (bench/README.md); its target is < 350 KB
 * and this budget keeps 15 KB below it, so a merge that adds to the sign-in path fails here, naming the
 * files and sources that grew, instead of in the next bench run.
 *
 * The export is made when its sources changed (scripts/web-export.ts; a few minutes on a busy machine) and
 * reused otherwise, as the browser journeys do.
 */
import * as fs from 'node:fs';
import { ensureWebExport, WEB_DIR, WEB_MAPS_DIR } from '../../scripts/web-export';
import {
  BASELINE_FILE,
  describeSignIn,
  HEADER_BYTES_PER_RESPONSE,
  SIGN_IN_BUDGET_KB,
  signInFiles,
  signInSize,
  whatGrew,
  type SignInBaseline,
} from '../../scripts/web-size';

const EXPORT_TIMEOUT_MS = 20 * 60_000;

describe('cold sign-in download budget', () => {
  beforeAll(() => {
    ensureWebExport(() => undefined);
  }, EXPORT_TIMEOUT_MS);

  it('finds every file a first visit loads (so the sum below means something)', () => {
    const files = signInFiles(WEB_DIR, WEB_MAPS_DIR);
    const labels = files.map((f) => f.label);
    expect(labels).toEqual(
      expect.arrayContaining([
        'index.html',
        '__expo-metro-runtime.js',
        '__common.js',
        'app-entry.js',
        'app/_layout.tsx chunk',
        'app/sign-in.tsx chunk',
        'app/(shell)/_layout.tsx chunk',
        'Lexend_400Regular.woff2',
        'Lexend_500Medium.woff2',
        'Lexend_600SemiBold.woff2',
      ]),
    );
    // Only the core faces: the extension files load when a screen shows one of their characters.
    expect(labels.filter((l) => l.includes('-ext'))).toEqual([]);
    // The framework alone is over 100 KB of brotli: a reader that found empty files would pass the budget.
    expect(files.find((f) => f.label === 'app-entry.js')!.bytes).toBeGreaterThan(100 * 1024);
  });

  it(`stays within ${SIGN_IN_BUDGET_KB} KB (bodies + ${HEADER_BYTES_PER_RESPONSE} B of headers per response)`, () => {
    const size = signInSize(WEB_DIR, WEB_MAPS_DIR);
    if (size.wireKb > SIGN_IN_BUDGET_KB) {
      const base = fs.existsSync(BASELINE_FILE) ? (JSON.parse(fs.readFileSync(BASELINE_FILE, 'utf8')) as SignInBaseline) : null;
      const grew = base ? whatGrew(WEB_DIR, WEB_MAPS_DIR, base) : ['(no baseline: scripts/web-size-baseline.json)'];
      throw new Error(
        [
          `cold sign-in is ${size.wireKb} KB, over its budget of ${SIGN_IN_BUDGET_KB} KB.`,
          `Grew since the baseline${base ? ` of ${base.measuredOn}` : ''}:`,
          ...grew,
          'A module two lazily loaded chunks share goes into __common.js, which every first visit loads',
          '(docs/performance-notes.md). `npm run web-size` prints the whole download.',
          '',
          describeSignIn(WEB_DIR, WEB_MAPS_DIR, 8),
        ].join('\n'),
      );
    }
    expect(size.wireKb).toBeLessThanOrEqual(SIGN_IN_BUDGET_KB);
  });
});
