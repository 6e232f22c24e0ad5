import fs from 'node:fs';
import path from 'node:path';
import type { Logger } from 'pino';
import { z } from 'zod';
import { clearanceInputSchema } from '@shared/clearances/clearance.schema';
import { readingInputSchema } from '@shared/readings/reading.schema';
import type { StoryAction } from '@shared/review/workflow';
import { storyTagsSchema } from '@shared/stories/story.schema';
import type { Config } from '../config';
import { Build, Part } from '../features/builds/build.model';
import { createClearance } from '../features/clearances/clearances.service';
import { Clip, Moment } from '../features/clips/clip.model';
import { Instrument, ZeroCheck } from '../features/instruments/instrument.model';
import { addZeroCheck } from '../features/instruments/instruments.service';
import { Reading } from '../features/readings/reading.model';
import { createReading } from '../features/readings/readings.service';
import { claimStory, evidenceOf, recordCheck, transition } from '../features/review/review.service';
import { Spec, SpecVersion } from '../features/specs/spec.model';
import { Story } from '../features/stories/story.model';
import { createStory } from '../features/stories/stories.service';
import { User } from '../features/users/user.model';

const at = z.object({ clip: z.string(), atMs: z.number().int().nonnegative() });
const diaryFileSchema = z.object({
  note: z.string(),
  builds: z.array(
    z.object({
      owner: z.string(),
      build: z.string(),
      zeroChecks: z.array(z.object({ instrument: z.string(), checkedOn: z.string(), standardSize: z.string(), shown: z.string(), note: z.string() })),
      moments: z.array(at.extend({ label: z.string() })),
      readings: z.array(
        at.extend({
          key: z.string(),
          name: z.string(),
          instrument: z.string(),
          part: z.string().nullable().default(null),
          kind: z.enum(['direct', 'bracket', 'repeated']),
          value: z.string().optional(),
          passes: z.string().optional(),
          stops: z.string().optional(),
          values: z.array(z.string()).optional(),
          takenOn: z.string(),
          note: z.string(),
        }),
      ),
      clearances: z.array(
        z.object({
          key: z.string(),
          name: z.string(),
          template: z.string().nullable(),
          /** A formula over the terms' symbols; a signed sum when absent. */
          formula: z.string().optional(),
          terms: z.array(z.object({ reading: z.string(), sign: z.union([z.literal(1), z.literal(-1)]).default(1), symbol: z.string().optional() })),
          spec: z.string(),
        }),
      ),
      stories: z.array(
        z.object({
          title: z.string(),
          summary: z.string(),
          workDate: z.string(),
          tags: storyTagsSchema,
          cover: at,
          state: z.enum(['draft', 'in-review', 'changes-requested', 'published']),
          flag: z.object({ reading: z.string(), comment: z.string() }).optional(),
          body: z.string(),
        }),
      ),
    }),
  ),
});

/** The invented diary of the demo builds (content/diary.json), validated. */
export function loadDemoDiary(dir = path.resolve('content')) {
  return diaryFileSchema.parse(JSON.parse(fs.readFileSync(path.join(dir, 'diary.json'), 'utf8')));
}

/**
 * Gives the demo builds their invented readings, clearances and diary entries, through the same
 * services the API uses (so every figure is what the engine computes), and takes the entries to
 * their demo states through the review workflow as the demo moderator would: one published,
 * one sent back with a flagged reading, one in review, one draft. Runs for a build only while
 * it has no readings, so a second start adds nothing and never touches a builder's own work.
 * Needs the demo clips (and their moments) to exist: run after `seedDemoClips`.
 */
export async function seedDemoDiary(deps: { config: Pick<Config, 'publicUrl' | 'sessionSecret'>; logger: Logger }) {
  const moderator = await User.findOne({ where: { login: 'demo-moderator' } });
  let made = 0;
  for (const demo of loadDemoDiary().builds) {
    const owner = await User.findOne({ where: { login: demo.owner } });
    const build = owner && (await Build.findOne({ where: { ownerId: owner.id, title: demo.build } }));
    if (!owner || !build || (await Reading.count({ where: { buildId: build.id } })) > 0) continue;
    const clips = await Clip.findAll({ where: { buildId: build.id } });
    const momentAt = async (ref: { clip: string; atMs: number }, label = '') => {
      const clip = clips.find((c) => c.title === ref.clip);
      if (!clip) return null;
      const found = await Moment.findOne({ where: { clipId: clip.id, atMs: ref.atMs } });
      return found ?? Moment.create({ clipId: clip.id, atMs: ref.atMs, label, createdBy: owner.id });
    };
    const instruments = await Instrument.findAll({ where: { ownerId: owner.id } });
    const instrument = (serial: string) => {
      const found = instruments.find((i) => i.serial === serial);
      if (!found) throw new Error(`demo diary: no instrument ${serial} for ${demo.owner}`);
      return found;
    };
    const parts = await Part.findAll({ where: { buildId: build.id } });

    for (const m of demo.moments) await momentAt(m, m.label);
    for (const z0 of demo.zeroChecks) {
      const inst = instrument(z0.instrument);
      if (await ZeroCheck.count({ where: { instrumentId: inst.id, checkedOn: z0.checkedOn } })) continue;
      await addZeroCheck(inst, owner, { checkedOn: z0.checkedOn, standardSize: z0.standardSize, shown: z0.shown, momentId: null, note: z0.note });
    }
    const readingIds = new Map<string, number>();
    for (const r of demo.readings) {
      const moment = await momentAt(r);
      if (!moment) continue;
      const input = readingInputSchema.parse({
        momentId: moment.id,
        instrumentId: instrument(r.instrument).id,
        partId: r.part ? (parts.find((p) => p.serial === r.part)?.id ?? null) : null,
        key: r.key,
        name: r.name,
        kind: r.kind,
        ...(r.value !== undefined && { value: r.value }),
        ...(r.passes !== undefined && { passes: r.passes }),
        ...(r.stops !== undefined && { stops: r.stops }),
        ...(r.values !== undefined && { values: r.values }),
        takenOn: r.takenOn,
        note: r.note,
      });
      readingIds.set(r.key, (await createReading(build, owner, input)).id);
    }
    for (const c of demo.clearances) {
      if (!c.terms.every((t) => readingIds.has(t.reading))) continue;
      const spec = await Spec.findOne({ where: { name: c.spec } });
      const version = spec && (await SpecVersion.findOne({ where: { specId: spec.id }, order: [['version', 'DESC']] }));
      await createClearance(
        build,
        owner,
        clearanceInputSchema.parse({
          key: c.key,
          name: c.name,
          template: c.template,
          terms: c.terms.map((t) => ({ readingId: readingIds.get(t.reading)!, sign: t.sign, ...(t.symbol !== undefined && { symbol: t.symbol }) })),
          ...(c.formula !== undefined && { formula: c.formula }),
          specVersionId: version?.id ?? null,
        }),
      );
    }
    for (const s of demo.stories) {
      const cover = await momentAt(s.cover);
      const story = await createStory(build, owner, {
        title: s.title,
        summary: s.summary,
        workDate: s.workDate,
        tags: s.tags,
        coverMomentId: cover?.id ?? null,
        body: s.body,
      });
      made += 1;
      if (s.state === 'draft') continue;
      await takeThroughReview(story.id, { state: s.state, flag: s.flag }, owner, moderator, deps);
    }
  }
  if (made) deps.logger.info(`demo diary entries written: ${made}`);
  return made;
}

async function takeThroughReview(
  storyId: number,
  s: { state: 'in-review' | 'changes-requested' | 'published'; flag?: { reading: string; comment: string } },
  owner: User,
  moderator: User | null,
  deps: { config: Pick<Config, 'publicUrl' | 'sessionSecret'>; logger: Logger },
) {
  const review = { config: deps.config, queue: null };
  const move = async (user: User, action: StoryAction, reason?: string) => {
    const story = (await Story.findByPk(storyId))!;
    await transition(storyId, user, { action, lockVersion: story.lockVersion, ...(reason && { reason }) }, review);
  };
  await move(owner, 'submit');
  if (s.state === 'in-review' || !moderator) return;
  await claimStory(storyId, moderator, review);
  const story = (await Story.findByPk(storyId))!;
  const e = await evidenceOf(story);
  const flagged = s.flag ? e.citedReadings.find((r) => r.key === s.flag!.reading) : undefined;
  for (const r of e.citedReadings) {
    const flag = flagged?.id === r.id;
    await recordCheck(moderator, { storyId, subjectType: 'reading', subjectId: r.id, state: flag ? 'flagged' : 'checked', comment: flag ? s.flag!.comment : '' }, review);
  }
  for (const c of e.citedClearances) {
    // A clearance resting on the flagged reading is left for after the builder's answer.
    const usesFlagged = flagged !== undefined && c.terms.some((t) => t.readingId === flagged.id);
    if (!usesFlagged) await recordCheck(moderator, { storyId, subjectType: 'clearance', subjectId: c.id, state: 'checked', comment: '' }, review);
  }
  if (s.state === 'changes-requested') await move(moderator, 'request-changes', 'One reading does not match its still; see the flag.');
  else await move(moderator, 'publish');
}
