import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { storyImageResponseSchema, type StoryImage } from '@shared/stories/story.schema';
import { makeTestClip } from '../../support/clips';
import { makeTestPng, sessionFor, type Session } from '../../support/matrix-fixtures';
import { lockVersionOf, makeReviewFixture, move, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Story images on the public side. OWASP ASVS 5.0.0 V8 Authorization: V8.2.2 (data-specific
 * access: a visitor gets only the images a current publication shows, never a draft's) and
 * V8.3.1 (decided in the server for every request, so withdrawing a story makes its images
 * private again at once).
 */

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let follower: Session;
let anonymous: Session;
let published: ReviewFixture;
/** In the published revision's body. */
let shown: StoryImage;
/** Added to the story's body after it was published: only the unpublished revision uses it. */
let laterOnly: StoryImage;
/** Uploaded to the published story but never in any body. */
let unused: StoryImage;
/** An image of another story, a draft, that the published body names: not the publication's own. */
let othersDraft: StoryImage;

async function upload(s: Session, storyId: number, file: string): Promise<StoryImage> {
  const res = await s.agent.post(`/api/stories/${storyId}/images`).set('x-csrf-token', s.token).field('alt', 'Pump body on the plate').attach('file', file, 'pump.png').expect(201);
  return storyImageResponseSchema.parse(res.body).image;
}

async function setBody(storyId: number, body: string) {
  await owner.agent
    .patch(`/api/stories/${storyId}`)
    .set('x-csrf-token', owner.token)
    .send({ body, lockVersion: await lockVersionOf(owner, storyId) })
    .expect(200);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-published-images-'));
  const [clipFile, png] = await Promise.all([makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work }), makeTestPng(work, 'pump.png')]);
  t = await startTestApp({}, { jobs: true });
  [owner, moderator, follower, anonymous] = await Promise.all([sessionFor(t, 'owner'), sessionFor(t, 'moderator'), sessionFor(t, 'follower'), sessionFor(t, 'anonymous')]);

  published = await makeReviewFixture(owner, { clipFile, title: 'Image test: published' });
  const draft = await makeReviewFixture(owner, { clipFile, title: 'Image test: a draft' });
  [shown, laterOnly, unused, othersDraft] = [
    await upload(owner, published.story.id, png),
    await upload(owner, published.story.id, png),
    await upload(owner, published.story.id, png),
    await upload(owner, draft.story.id, png),
  ];
  await setBody(draft.story.id, `${draft.story.body}\n${othersDraft.markdown}\n`);
  await setBody(published.story.id, `${published.story.body}\n${shown.markdown}\n\nAlso [the other entry's picture](${othersDraft.url}).\n`);
  await publishThroughReview(owner, moderator, published);
  // A second revision, saved but not through review: the publication stays the first.
  await setBody(published.story.id, `${published.story.body}\n${shown.markdown}\n${laterOnly.markdown}\n`);
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('story images of a published story (ASVS 5.0.0 V8.2.2)', () => {
  it('an anonymous reader gets an image the current publication shows: 200, the image bytes, publicly cacheable', async () => {
    const res = await anonymous.agent.get(shown.url).buffer(true).expect(200);
    expect(res.headers['content-type']).toBe('image/png');
    expect(res.headers['cache-control']).toMatch(/^public, max-age=\d+$/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    const bytes = res.body as Buffer;
    expect(bytes.length).toBe(shown.sizeBytes);
    expect(bytes.subarray(0, 8).equals(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]))).toBe(true);
  });

  it('a signed-in reader who may not see the build gets it too, the same public answer', async () => {
    const res = await follower.agent.get(shown.url).expect(200);
    expect(res.headers['cache-control']).toMatch(/^public, /);
  });

  it('an image only a draft or a later unpublished revision uses, or none uses, is 401 to a visitor and 404 to a signed-in stranger', async () => {
    for (const image of [laterOnly, unused, othersDraft]) {
      const res = await anonymous.agent.get(image.url);
      expect(res.status, image.url).toBe(401);
      expect(res.body.error.code).toBe('unauthorized');
      expect(res.headers['cache-control'] ?? '').not.toMatch(/public/);
      expect((await follower.agent.get(image.url)).status, image.url).toBe(404);
    }
  });

  it('a visitor gets 401 for an unknown id, the same answer as for a private image', async () => {
    expect((await anonymous.agent.get('/api/story-images/999999999')).status).toBe(401);
  });

  it('its builder still gets the private images, privately cached', async () => {
    const res = await owner.agent.get(laterOnly.url).expect(200);
    expect(res.headers['cache-control']).toMatch(/^private/);
  });

  it('after the story is withdrawn its images are private again: 401 to a visitor, still 200 to its builder', async () => {
    expect((await move(owner, published.story.id, 'withdraw', { reason: 'A reading needs taking again (image test).' })).status).toBe(200);
    const res = await anonymous.agent.get(shown.url);
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('unauthorized');
    expect((await follower.agent.get(shown.url)).status).toBe(404);
    const own = await owner.agent.get(shown.url).expect(200);
    expect(own.headers['cache-control']).toMatch(/^private/);
  });
});
