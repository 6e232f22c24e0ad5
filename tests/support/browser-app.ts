import http from 'node:http';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import { buildClientIfChanged } from '../../scripts/lib/client-build';
import { startTestApp, type TestAppOptions } from './test-app';

/**
 * The product as `npm start` serves it (built client + API + fake provider), on a free
 * loopback port, for browser tests. The client is rebuilt only when its sources changed.
 */
export async function startBrowserApp(opts: TestAppOptions = {}) {
  // BENCHPROOF_CLIENT_OUT gives a run its own build folder, so two runs never rebuild one folder at once.
  const clientOut = process.env.BENCHPROOF_CLIENT_OUT ? path.resolve(process.env.BENCHPROOF_CLIENT_OUT) : undefined;
  await buildClientIfChanged(clientOut);
  const server = http.createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const t = await startTestApp({ PUBLIC_URL: url, ...(clientOut && { CLIENT_DIR: clientOut }) }, opts);
  server.on('request', t.app);
  return {
    ...t,
    url,
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await t.close();
    },
  };
}
