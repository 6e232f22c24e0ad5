import { describe, expect, it } from 'vitest';
import { loadDemoBuilds } from '../../../server/db/demo-content';
import { seedDemoClips } from '../../../server/db/seed-clips';
import { loadDemoDiary, seedDemoDiary } from '../../../server/db/seed-diary';
import { Build } from '../../../server/features/builds/build.model';
import { Reading } from '../../../server/features/readings/reading.model';
import { EvidenceCheck, StoryPublication } from '../../../server/features/review/review.model';
import { evidenceOf } from '../../../server/features/review/review.service';
import { Story } from '../../../server/features/stories/story.model';
import { Clip, Moment } from '../../../server/features/clips/clip.model';
import { displayRegionOf } from '../../../server/features/speech/display.service';
import { listeningOf, suggestionsForClip } from '../../../server/features/speech/speech.service';
import { createLogger } from '../../../server/logger';
import { startTestApp } from '../../support/test-app';

describe('the demo clips', () => {
  it('are generated once for the invented builds, processed to ready, and not again on a second start; the invented diary goes on top of them once', async () => {
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

      // The diary on top: readings, clearances and entries in their demo states, once.
      const diary = loadDemoDiary();
      const entries = diary.builds.flatMap((b) => b.stories);
      expect(await seedDemoDiary(deps)).toBe(entries.length);
      expect(await seedDemoDiary(deps)).toBe(0);
      // Within the demo builds: other tests' builds may use the same keys.
      const demoBuilds = await Build.findAll({ attributes: ['id'], where: { title: diary.builds.map((b) => b.build) } });
      expect(await Reading.count({ where: { key: diary.builds.flatMap((b) => b.readings.map((r) => r.key)), buildId: demoBuilds.map((b) => b.id) } })).toBe(
        diary.builds.reduce((n, b) => n + b.readings.length, 0),
      );
      for (const entry of entries) {
        const story = (await Story.findOne({ where: { title: entry.title } }))!;
        expect(story.state, entry.title).toBe(entry.state);
        // Every claim the demo makes holds against the engine's figures, except where a flag is the point.
        const e = await evidenceOf(story);
        expect(e.broken, entry.title).toEqual([]);
        expect(e.claims.filter((c) => c.status.state !== 'ok').map((c) => `${c.text}: ${JSON.stringify(c.status)}`), entry.title).toEqual([]);
        if (entry.state === 'published') expect(await StoryPublication.count({ where: { storyId: story.id } })).toBe(1);
        if (entry.flag) expect(await EvidenceCheck.count({ where: { storyId: story.id, state: 'flagged' } })).toBe(1);
      }

      // Every moment with a reading has a line to say and a figure to show.
      const demoClips = loadDemoBuilds().flatMap((b) => b.clips);
      for (const r of diary.builds.flatMap((b) => b.readings)) {
        const moment = demoClips.find((c) => c.title === r.clip)?.moments.find((m) => m.atMs === r.atMs);
        if (moment) expect(moment.say && moment.show, `${r.clip} at ${r.atMs} ms`).toBeTruthy();
      }

      // The narration is heard: at least one demo reading is proposed near its moment, with its figure.
      const listening = async () => Promise.all(clips.map(async (c) => (await listeningOf(c.id))?.state));
      const listenEnd = Date.now() + 60_000;
      let states = await listening();
      while (states.some((s) => s !== 'ready') && Date.now() < listenEnd) {
        await new Promise((r) => setTimeout(r, 300));
        states = await listening();
      }
      expect(states).toEqual(clips.map(() => 'ready'));
      const heard: string[] = [];
      for (const clip of clips) {
        for (const p of await suggestionsForClip(clip)) if (p.logged) heard.push(`${clip.title}: ${p.readingKey} heard as "${p.text}"`);
      }
      console.log(`demo readings heard on their clips (${heard.length}):\n${heard.join('\n')}`);
      expect(heard.length).toBeGreaterThanOrEqual(1);

      // A demo clip with its display marked has each figure the display showed read off it, and
      // the demo readings at those moments are the figures read (logged), in the unit marked.
      const marked = loadDemoBuilds().flatMap((b) => b.clips).filter((c) => c.displayUnit);
      expect(marked.length).toBeGreaterThanOrEqual(1);
      for (const spec of marked) {
        const clip = clips.find((c) => c.title === spec.title)!;
        const displayEnd = Date.now() + 60_000;
        while ((await displayRegionOf(clip.id))?.state !== 'ready' && Date.now() < displayEnd) await new Promise((r) => setTimeout(r, 300));
        expect((await displayRegionOf(clip.id))?.state, spec.title).toBe('ready');
        const read = (await suggestionsForClip(clip)).filter((p) => p.source === 'display');
        const shows = spec.moments.filter((m) => m.show).map((m) => m.show);
        expect(read.map((p) => p.text), spec.title).toEqual(shows);
        expect(read.every((p) => p.unit === spec.displayUnit && p.logged), JSON.stringify(read)).toBe(true);
      }
    } finally {
      await t.close();
    }
  }, 240_000);
});
