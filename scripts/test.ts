// `npm test`: Debian's ffmpeg and pocketsphinx (installed when missing), type-check, lint, then the whole Vitest
// suite (its global setup starts the test PostgreSQL and recreates the test database). Stops at
// the first failing step, non-zero.
import { spawn } from 'node:child_process';
import path from 'node:path';
import { repoRoot } from './lib/bootstrap';
import { ensureSystemFfmpeg } from './lib/ffmpeg';
import { ensureSystemSpeech } from './lib/speech';

// The media tests run the ffmpeg the server would: the system's, once it is there.
ensureSystemFfmpeg();
// Listening to clips needs pocketsphinx; its test narrates a clip with festival.
ensureSystemSpeech({ testVoice: true });

const bin = (name: string) => path.join(repoRoot, 'node_modules', '.bin', name);
const steps: [string, string[]][] = [
  ['type-check', [bin('tsc'), '-p', 'tsconfig.json', '--noEmit']],
  ['lint', [bin('eslint'), '.']],
  ['tests', [bin('vitest'), 'run', ...process.argv.slice(2)]],
];

let current: ReturnType<typeof spawn> | null = null;
for (const signal of ['SIGINT', 'SIGTERM'] as const) process.on(signal, () => current?.kill(signal));

for (const [name, [cmd, ...args]] of steps) {
  console.log(`\n[test] ${name}`);
  const code = await new Promise<number>((resolve) => {
    current = spawn(cmd!, args, { cwd: repoRoot, stdio: 'inherit' });
    current.on('exit', (c, signal) => resolve(c ?? (signal ? 1 : 0)));
  });
  if (code !== 0) {
    console.error(`[test] ${name} failed (exit ${code})`);
    process.exit(code);
  }
}
