// Plain JavaScript on purpose: it runs before node_modules (and so TypeScript tooling) exists.
// Installs dependencies with `npm ci` when node_modules is missing or older than package-lock.json.
import { createHash } from 'node:crypto';
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..');
const lock = path.join(root, 'package-lock.json');
const stamp = path.join(root, 'node_modules', '.benchproof-deps');
const want = createHash('sha256').update(fs.readFileSync(lock)).digest('hex');
const have = fs.existsSync(stamp) ? fs.readFileSync(stamp, 'utf8').trim() : '';

if (have !== want) {
  console.log('[benchproof] installing dependencies (npm ci)…');
  const r = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root, stdio: 'inherit' });
  if (r.status !== 0) {
    console.error('[benchproof] npm ci failed; see the output above.');
    process.exit(r.status ?? 1);
  }
  fs.writeFileSync(stamp, want + '\n');
}

// The ffprobe/ffmpeg binaries ship without execute bits for other users; make them runnable.
for (const bin of ['@ffprobe-installer/linux-x64/ffprobe', '@ffmpeg-installer/linux-x64/ffmpeg']) {
  const p = path.join(root, 'node_modules', bin);
  try {
    fs.chmodSync(p, 0o755);
  } catch {
    // Not on this platform; the media code falls back to a system ffmpeg.
  }
}
