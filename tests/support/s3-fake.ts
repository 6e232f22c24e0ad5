import { spawn } from 'node:child_process';
import fsp from 'node:fs/promises';
import { createRequire } from 'node:module';
import os from 'node:os';
import path from 'node:path';
import { multipartApiScript } from './s3-fake-multipart';

export interface S3Fake {
  endpoint: string;
  region: string;
  bucket: string;
  accessKeyId: string;
  secretAccessKey: string;
  /** How many HTTP requests the fake has received so far. */
  requests(): Promise<number>;
  stop(): Promise<void>;
}

// Runs in the child. s3rver (CommonJS, no types) signs its ListObjectsV2 continuation tokens
// with DES, which Node 17+ only offers under --openssl-legacy-provider; without it every
// truncated listing page is a 500. So the fake gets a process of its own with that flag.
const childScript = `
const S3rver = require(process.env.S3RVER_MAIN);
const server = new S3rver({
  address: '127.0.0.1', port: 0, silent: true,
  directory: process.env.S3_FAKE_DIR,
  configureBuckets: [{ name: process.env.S3_FAKE_BUCKET }],
});
${multipartApiScript}
let requests = 0;
server.run().then(
  (address) => {
    server.httpServer.on('request', () => { requests += 1; });
    process.send({ type: 'ready', port: address.port });
  },
  (err) => { process.send({ type: 'failed', message: String(err && err.stack || err) }); process.exit(1); },
);
process.on('message', (m) => {
  if (m.type === 'requests') process.send({ type: 'requests', id: m.id, requests });
  if (m.type === 'stop') {
    server.close().then(() => process.exit(0), () => process.exit(1));
    server.httpServer.closeAllConnections();
  }
});
process.on('disconnect', () => process.exit(0));
`;

/**
 * Starts s3rver (an S3-compatible server written in JavaScript, objects kept in a temp folder)
 * on a free loopback port with one empty bucket. Talk to it path-style.
 */
export async function startS3Fake(bucket = 'benchproof-test'): Promise<S3Fake> {
  const directory = await fsp.mkdtemp(path.join(os.tmpdir(), 'benchproof-s3-'));
  const child = spawn(process.execPath, ['--openssl-legacy-provider', '-e', childScript], {
    env: {
      ...process.env,
      S3RVER_MAIN: createRequire(import.meta.url).resolve('s3rver'),
      S3_FAKE_DIR: directory,
      S3_FAKE_BUCKET: bucket,
    },
    stdio: ['ignore', 'inherit', 'inherit', 'ipc'],
  });
  type Message = { type: 'ready'; port: number } | { type: 'failed'; message: string } | { type: 'requests'; id: number; requests: number };

  let port: number;
  try {
    port = await new Promise<number>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error('the S3 fake did not start within 15 s')), 15_000);
      child.once('exit', (code) => reject(new Error(`the S3 fake exited with code ${code} before it was ready`)));
      child.on('message', (m: Message) => {
        if (m.type === 'ready') {
          clearTimeout(timer);
          resolve(m.port);
        } else if (m.type === 'failed') {
          clearTimeout(timer);
          reject(new Error(`the S3 fake did not start: ${m.message}`));
        }
      });
    });
  } catch (err) {
    child.kill();
    await fsp.rm(directory, { recursive: true, force: true });
    throw err;
  }

  let nextId = 0;
  const waiting = new Map<number, (n: number) => void>();
  child.on('message', (m: Message) => {
    if (m.type === 'requests') {
      waiting.get(m.id)?.(m.requests);
      waiting.delete(m.id);
    }
  });

  return {
    endpoint: `http://127.0.0.1:${port}`,
    region: 'us-east-1',
    bucket,
    // s3rver's fixed test credentials; it checks signatures made with them.
    accessKeyId: 'S3RVER',
    secretAccessKey: 'S3RVER',
    requests: () =>
      new Promise<number>((resolve) => {
        const id = nextId++;
        waiting.set(id, resolve);
        child.send({ type: 'requests', id });
      }),
    async stop() {
      if (child.exitCode === null) {
        const exited = new Promise((resolve) => child.once('exit', resolve));
        child.send({ type: 'stop' });
        const timer = setTimeout(() => child.kill(), 5000);
        await exited;
        clearTimeout(timer);
      }
      await fsp.rm(directory, { recursive: true, force: true });
    },
  };
}
