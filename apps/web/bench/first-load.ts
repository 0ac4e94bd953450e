// The JavaScript a browser downloads before the sign-in page shows: the entry script and every module index.html
// preloads, read from the production build (`vite build`, run first by `npm run bench -w apps/web`). The sign-in route
// loads nothing lazily, so this is all of it. Reported in bytes, raw and gzipped (zlib level 6, as a server
// compressing on the fly would). Goal: ≤ 200 KB gzipped.
import { readFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';

const dist = new URL('../dist/', import.meta.url);
const html = readFileSync(new URL('index.html', dist), 'utf8');
const scripts = [
  ...html.matchAll(/<script[^>]*type="module"[^>]*src="([^"]+)"/g),
  ...html.matchAll(/<link[^>]*rel="modulepreload"[^>]*href="([^"]+)"/g),
].map((m) => m[1]);
if (scripts.length === 0) throw new Error('index.html names no script: is dist/ a production build?');

const GOAL = 200 * 1024;
let raw = 0;
let gzipped = 0;
console.log('\nJavaScript loaded before sign-in (apps/web/dist):');
for (const path of [...new Set(scripts)]) {
  const bytes = readFileSync(new URL(`.${path}`, dist));
  const zipped = gzipSync(bytes, { level: 6 }).length;
  raw += bytes.length;
  gzipped += zipped;
  console.log(`  ${path.padEnd(40)} ${bytes.length.toString().padStart(8)} B  ${zipped.toString().padStart(7)} B gzipped`);
}
console.log(`  ${'total'.padEnd(40)} ${raw.toString().padStart(8)} B  ${gzipped.toString().padStart(7)} B gzipped (goal ≤ ${GOAL} B: ${((100 * gzipped) / GOAL).toFixed(0)} % of it)`);
