// `npm run dev`: the same API as `npm start`, plus Vite's dev server with hot reload in front.
import { createServer } from 'vite';
import { seedDemoClips } from '../server/db/seed-clips';
import { startServer } from '../server/server';
import { repoRoot } from './lib/bootstrap';
import { bringUpLocal, demoSignInLines, onShutdown } from './lib/run-local';

const vitePort = Number(process.env.VITE_PORT ?? 5173);
const viteUrl = `http://127.0.0.1:${vitePort}`;
// The browser talks to Vite, which proxies /api and /auth; the OAuth callback must come back there.
const local = await bringUpLocal({ NODE_ENV: 'development', PUBLIC_URL: process.env.PUBLIC_URL ?? viteUrl });
const running = await startServer(local.config);
await seedDemoClips({ config: local.config, storage: running.storage, queue: running.queue, logger: running.logger });
const vite = await createServer({ root: repoRoot, server: { port: vitePort } });
await vite.listen();
console.log([`\nBenchproof (dev) at ${viteUrl}  ·  API on port ${local.config.port}`, ...demoSignInLines(viteUrl)].join('\n'));
onShutdown(async () => {
  await vite.close();
  await running.stop();
  await local.stopAll();
});
