import { describe, expect, it } from 'vitest';
import { loadDemoBuilds } from '../../../server/db/demo-content';
import { seedDemoClips } from '../../../server/db/seed-clips';
import { Clip, Moment } from '../../../server/features/clips/clip.model';
import { createLogger } from '../../../server/logger';
import { startTestApp } from '../../support/test-app';

describe('the demo clips', () => {
  it('are generated once for the invented builds, processed to ready, and not again on a second start', async () => {
    const t = await startTestApp({}, { jobs: true });
    try {
      const deps = { config: t.config, storage: t.storage, queue: t.queue!, logger: createLogger(t.config) };
      const expected = loadDemoBuilds().reduce((n, b) => n + b.clips.length, 0);
      expect(await seedDemoClips(deps)).toBe(expected);
      expect(await seedDemoClips(deps)).toBe(0);
      const end = Date.now() + 90_000;
      let clips = await Clip.findAll({ where: { title: loadDemoBuilds().flatMap((b) => b.clips.map((c) => c.title)) } });
      while (clips.some((c) => c.status !== 'ready') && Date.now() < end) {
        await new Promise((r) => setTimeout(r, 300));
        clips = await Clip.findAll({ where: { id: clips.map((c) => c.id) } });
      }
      expect(clips.map((c) => c.status)).toEqual(clips.map(() => 'ready'));
      const moments = await Moment.count({ where: { clipId: clips.map((c) => c.id) } });
      expect(moments).toBe(loadDemoBuilds().reduce((n, b) => n + b.clips.reduce((m, c) => m + c.moments.length, 0), 0));
    } finally {
      await t.close();
    }
  }, 120_000);
});
