// `npm start`: Debian's ffmpeg (installed when missing), database, migrations, demo data, client build, local fakes, then the server.
import { seedDemoClips } from '../server/db/seed-clips';
import { seedDemoDiary } from '../server/db/seed-diary';
import { logProcessFailures } from '../server/logger';
import { startServer } from '../server/server';
import { buildClientIfChanged } from './lib/client-build';
import { bringUpLocal, demoSignInLines, onShutdown } from './lib/run-local';

const local = await bringUpLocal({ NODE_ENV: process.env.NODE_ENV ?? 'production' });
let running: Awaited<ReturnType<typeof startServer>> | null = null;
// Registered before anything slow, so Ctrl-C during start-up still stops PostgreSQL.
onShutdown(async () => {
  await running?.stop();
  await local.stopAll();
});
try {
  const built = await buildClientIfChanged();
  if (!built) console.log('[client] up to date');
  running = await startServer(local.config);
  logProcessFailures(running.logger);
  // Generated once: the demo builds' clips (test patterns with captions), processed by the worker.
  await seedDemoClips({ config: local.config, storage: running.storage, queue: running.queue, logger: running.logger });
  // Then their invented readings, clearances and diary entries, taken through review (only while the demo is in use).
  if (local.config.github.fake) await seedDemoDiary({ config: local.config, logger: running.logger });
  const url = local.config.publicUrl;
  console.log(
    [
      '',
      `Benchproof is running at ${url}`,
      '',
      'Demo sign-ins (invented people; the local provider approves them at once):',
      ...demoSignInLines(url),
      '',
      'Ctrl-C stops everything this command started.',
    ].join('\n'),
  );
} catch (err) {
  await local.stopAll();
  throw err;
}
