import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Clip } from '../../../server/features/clips/clip.model';
import { makeTestClip } from '../../support/clips';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * A full disk or an unwritable media store while a clip is uploaded: the upload is refused with
 * a message, and nothing is left behind (no clip row, no file in scratch or in storage). The
 * failure is injected at the storage driver with the errno a real disk gives (ENOSPC, EROFS),
 * because the tests run as root, for whom permissions do not stop a write.
 */

let t: TestApp;
let work: string;
let clipFile: string;
let buildId: number;
let agent: Awaited<ReturnType<typeof signIn>>;
let token: string;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-storage-full-'));
  clipFile = await makeTestClip({ seconds: 1, format: 'mp4-h264', dir: work });
  t = await startTestApp();
  agent = await signIn(t, 'demo-builder');
  token = await csrfToken(agent);
  const res = await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Storage fault build (test)' }).expect(201);
  buildId = res.body.build.id;
}, 120_000);
afterAll(async () => {
  await t?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

function filesUnder(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  return fs.readdirSync(dir, { recursive: true, withFileTypes: true }).filter((e) => e.isFile()).map((e) => path.join(e.parentPath, e.name));
}

describe.each([
  ['ENOSPC', 507, 'storage_full', /full/],
  ['EROFS', 503, 'storage_unwritable', /cannot be written/],
])('when the media store fails with %s', (errno, status, code, words) => {
  it(`refuses the upload with ${status} and a message, and leaves nothing behind`, async () => {
    const original = t.storage.putFile.bind(t.storage);
    t.storage.putFile = async () => {
      throw Object.assign(new Error(`${errno}: simulated`), { code: errno });
    };
    try {
      const before = await Clip.count({ where: { buildId } });
      const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', clipFile, 'pump.mp4');
      expect(res.status).toBe(status);
      expect(res.body.error.code).toBe(code);
      expect(res.body.error.message).toMatch(words);
      expect(res.body.error.message).not.toMatch(errno);
      expect(await Clip.count({ where: { buildId } })).toBe(before);
      expect(filesUnder(path.join(t.mediaDir, '.scratch', 'incoming'))).toEqual([]);
      expect(filesUnder(path.join(t.mediaDir, 'clips'))).toEqual([]);
    } finally {
      t.storage.putFile = original;
    }
  });
});
