/**
 * Renders a PDF's pages as PNG images to look at (the qualification and lot reports):
 *   npm run pdf-pages -- <file.pdf> [out-folder] [dpi]
 * Uses pdftoppm from Debian's poppler-utils, installed with apt-get when missing and run as root
 * (otherwise it says how). Pages land as <out>/page-1.png, page-2.png, …
 */
import { execFileSync, spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';

function hasPdftoppm(): boolean {
  return spawnSync('pdftoppm', ['-v'], { stdio: 'ignore' }).status === 0;
}

export function ensurePdftoppm(): void {
  if (hasPdftoppm()) return;
  if (typeof process.getuid !== 'function' || process.getuid() !== 0) {
    throw new Error("pdftoppm is missing. Install Debian's package first: sudo apt-get install -y poppler-utils");
  }
  console.log('[pdf-pages] installing Debian package poppler-utils (one time)…');
  execFileSync('apt-get', ['update'], { stdio: 'inherit' });
  execFileSync('apt-get', ['install', '-y', '--no-install-recommends', 'poppler-utils'], {
    stdio: 'inherit',
    env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
  });
  if (!hasPdftoppm()) throw new Error('apt-get installed poppler-utils but pdftoppm does not run');
}

export function renderPages(pdf: string, outDir: string, dpi = 70): string[] {
  ensurePdftoppm();
  fs.mkdirSync(outDir, { recursive: true });
  execFileSync('pdftoppm', ['-png', '-r', String(dpi), pdf, path.join(outDir, 'page')], { stdio: 'inherit' });
  return fs
    .readdirSync(outDir)
    .filter((f) => /^page-\d+\.png$/.test(f))
    .sort((a, b) => Number(a.match(/\d+/)![0]) - Number(b.match(/\d+/)![0]))
    .map((f) => path.join(outDir, f));
}

if (require.main === module) {
  const [pdf, out = '.data/pdf-pages', dpi = '70'] = process.argv.slice(2);
  if (!pdf) {
    console.error('usage: npm run pdf-pages -- <file.pdf> [out-folder] [dpi]');
    process.exit(2);
  }
  for (const p of renderPages(pdf, out, Number(dpi))) console.log(p);
}
