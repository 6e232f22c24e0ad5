// Plain JavaScript on purpose: it runs before node_modules (and so TypeScript tooling) exists.
// `node scripts/run.mjs [script.ts] [args…]`: installs dependencies with `npm ci` when
// node_modules is missing or older than package-lock.json, then runs the TypeScript script
// through tsx as ONE child whose signals we forward, so Ctrl-C or a SIGTERM sent to npm always
// reaches the code that stops PostgreSQL and the fakes.
import { createHash } from 'node:crypto';
import { spawn, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
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

const [script, ...args] = process.argv.slice(2);
if (script) {
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(root, script), ...args], { cwd: root, stdio: 'inherit' });
  for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP']) {
    process.on(signal, () => child.kill(signal));
  }
  // npm does not always pass on a SIGTERM; when npm itself is gone, stop the child cleanly too.
  const parent = process.ppid;
  setInterval(() => {
    if (process.ppid !== parent) child.kill('SIGTERM');
  }, 1000).unref();
  child.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
}
