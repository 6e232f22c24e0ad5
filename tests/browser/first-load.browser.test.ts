// What a reader's first load carries: the entry chunk plus the static imports of the page's route
// module, read from the built client's manifest. Holds the story page (and the home page) to the
// 150 KB gzip budget for JavaScript and keeps zod and the toast viewport out of it; the figures
// measured in a real browser come from `npm run bench:page`.
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import { beforeAll, describe, expect, it } from 'vitest';
import { buildClientIfChanged } from '../../scripts/lib/client-build';
import { repoRoot } from '../../scripts/lib/bootstrap';

interface ManifestChunk {
  file: string;
  src?: string;
  isEntry?: boolean;
  imports?: string[];
  dynamicImports?: string[];
}
type Manifest = Record<string, ManifestChunk>;

const clientDir = process.env.BENCHPROOF_CLIENT_OUT ? path.resolve(process.env.BENCHPROOF_CLIENT_OUT) : path.join(repoRoot, 'dist/client');
const BUDGET_BYTES = 150 * 1024;
let manifest: Manifest;

beforeAll(async () => {
  await buildClientIfChanged(process.env.BENCHPROOF_CLIENT_OUT ? clientDir : undefined);
  manifest = JSON.parse(fs.readFileSync(path.join(clientDir, '.vite/manifest.json'), 'utf8')) as Manifest;
}, 300_000);

/** The chunk files a page loads before any lazy import: entry + route module, with their static imports. */
function firstLoad(routeModule: string): string[] {
  const entry = Object.entries(manifest).find(([, c]) => c.isEntry)?.[0];
  expect(entry, 'the manifest names an entry').toBeDefined();
  expect(manifest[routeModule], `${routeModule} is a chunk of its own`).toBeDefined();
  const seen = new Set<string>();
  const visit = (key: string) => {
    if (seen.has(key)) return;
    seen.add(key);
    for (const dep of manifest[key]?.imports ?? []) visit(dep);
  };
  visit(entry!);
  visit(routeModule);
  return [...seen].map((key) => manifest[key]!.file).filter((file) => file.endsWith('.js'));
}

const read = (file: string) => fs.readFileSync(path.join(clientDir, file));
const gzipBytes = (files: string[]) => files.reduce((sum, f) => sum + zlib.gzipSync(read(f), { level: 6 }).length, 0);

describe.each([
  ['the story page', 'src/features/public/routes/story-page.tsx'],
  ['the home page', 'src/features/stories/routes/home-page.tsx'],
])('first load of %s', (_name, routeModule) => {
  it('stays under 150 KB of gzip JavaScript', () => {
    const files = firstLoad(routeModule);
    const bytes = gzipBytes(files);
    console.log(`${routeModule}: ${files.length} JS files, ${(bytes / 1024).toFixed(1)} KB gzip before lazy imports`);
    expect(bytes).toBeLessThan(BUDGET_BYTES);
  });

  it('carries neither zod nor the toast viewport', () => {
    const files = firstLoad(routeModule);
    // Strings that survive minification: zod's error class name, and an event Radix Toast sends.
    const withZod = files.filter((f) => read(f).includes('ZodError'));
    const withToast = files.filter((f) => read(f).includes('toast.viewportPause'));
    expect(withZod).toEqual([]);
    expect(withToast).toEqual([]);
    // The check can see them: both are in the build, in lazily loaded chunks.
    const all = Object.values(manifest).map((c) => c.file).filter((f) => f.endsWith('.js'));
    expect(all.some((f) => read(f).includes('ZodError'))).toBe(true);
    expect(all.some((f) => read(f).includes('toast.viewportPause'))).toBe(true);
  });
});
