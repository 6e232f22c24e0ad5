import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { build } from 'vite';
import { repoRoot } from './bootstrap';

const inputs = ['src', 'shared', 'public', 'index.html', 'vite.config.ts', 'package-lock.json', 'tsconfig.json'];

function hashInputs(): string {
  const h = crypto.createHash('sha256');
  h.update('production build\n');
  const walk = (p: string) => {
    if (!fs.existsSync(p)) return;
    const st = fs.statSync(p);
    if (st.isDirectory()) {
      for (const name of fs.readdirSync(p).sort()) walk(path.join(p, name));
    } else {
      h.update(path.relative(repoRoot, p));
      h.update(fs.readFileSync(p));
    }
  };
  for (const i of inputs) walk(path.join(repoRoot, i));
  return h.digest('hex');
}

/** Builds the client into dist/client unless its inputs are unchanged since the last build. */
export async function buildClientIfChanged(outDir = path.join(repoRoot, 'dist/client')): Promise<boolean> {
  const stamp = path.join(outDir, '.inputs-hash');
  const want = hashInputs();
  if (fs.existsSync(stamp) && fs.readFileSync(stamp, 'utf8') === want && fs.existsSync(path.join(outDir, 'index.html'))) {
    return false;
  }
  console.log('[client] building…');
  // Always the production build, whoever calls: inside Vitest NODE_ENV is 'test', and Vite would
  // then bundle React's development build into the folder `npm start` serves.
  const nodeEnv = process.env.NODE_ENV;
  process.env.NODE_ENV = 'production';
  try {
    await build({ root: repoRoot, mode: 'production', logLevel: 'warn', build: { outDir } });
  } finally {
    if (nodeEnv === undefined) delete process.env.NODE_ENV;
    else process.env.NODE_ENV = nodeEnv;
  }
  fs.writeFileSync(stamp, want);
  return true;
}
