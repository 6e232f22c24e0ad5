import type { Logger } from 'pino';
import type { PublicStoryListItem } from '@shared/public/public-story.schema';
import { STANDING_NOTE } from '@shared/stories/cautions';
import type { Config } from '../../config';
import type { Queue } from '../../jobs/queue';
import { enqueueMail, type OutgoingMail } from '../../mail/mail.job';
import { User } from '../users/user.model';
import { ReaderPreferences } from './reader-preferences.model';
import { listPublicStories } from './public.service';

/** Mondays at 07:00 UTC (pg-boss cron, evaluated in UTC). */
export const WEEKLY_DIGEST_CRON = '0 7 * * 1';

const WEEK_MS = 7 * 24 * 60 * 60 * 1000;

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** One reader's digest: what the builders they follow published since `since`, newest first. */
export function digestMail(publicUrl: string, reader: Pick<User, 'displayName' | 'email'>, stories: PublicStoryListItem[]): OutgoingMail | null {
  if (!reader.email || stories.length === 0) return null;
  const lines = stories.map((s) => ({
    text: `${s.builder.displayName}: "${s.title}" (${s.build.title})${s.revision > 1 ? `, revision ${s.revision}` : ''}`,
    url: `${publicUrl}/stories/${s.storyId}`,
  }));
  const settings = `${publicUrl}/account`;
  const intro = `${stories.length === 1 ? 'One diary entry was' : `${stories.length} diary entries were`} published this week by builders you follow.`;
  const off = `You get this weekly because you asked for it. Turn it off in your account: ${settings}`;
  return {
    to: reader.email,
    kind: 'weekly-digest',
    subject: `This week on Benchproof: ${stories.length} new ${stories.length === 1 ? 'entry' : 'entries'}`,
    text: [`Hello ${reader.displayName},`, '', intro, '', ...lines.map((l) => `- ${l.text}\n  ${l.url}`), '', STANDING_NOTE, '', off, '', '— Benchproof'].join('\n'),
    html: [
      '<!doctype html><html><body style="font-family: sans-serif; color: #222; line-height: 1.5; max-width: 36rem">',
      `<p>Hello ${escapeHtml(reader.displayName)},</p>`,
      `<p>${escapeHtml(intro)}</p>`,
      '<ul>',
      ...lines.map((l) => `<li><a href="${escapeHtml(l.url)}">${escapeHtml(l.text)}</a></li>`),
      '</ul>',
      `<p style="font-size: 0.85em; color: #555">${escapeHtml(STANDING_NOTE)}</p>`,
      `<p style="font-size: 0.85em; color: #555">${escapeHtml(off.replace(settings, ''))}<a href="${escapeHtml(settings)}">${escapeHtml(settings)}</a></p>`,
      '<p>— Benchproof</p></body></html>',
    ].join('\n'),
  };
}

/**
 * Queues the week's digest for every reader who asked for one and has something in it. Returns
 * how many were queued.
 */
export async function queueWeeklyDigests(deps: { config: Pick<Config, 'publicUrl'>; queue: Queue | null; logger?: Logger; now?: Date }): Promise<number> {
  const now = deps.now ?? new Date();
  const since = now.getTime() - WEEK_MS;
  const readers = await ReaderPreferences.findAll({ where: { weeklyDigest: true }, attributes: ['id'] });
  const mails: OutgoingMail[] = [];
  for (const { id } of readers) {
    const user = await User.findByPk(id);
    if (!user?.email) continue;
    const { items } = await listPublicStories({ limit: 50 }, { followerId: id });
    const mail = digestMail(deps.config.publicUrl, user, items.filter((s) => Date.parse(s.publishedAt) > since && Date.parse(s.publishedAt) <= now.getTime()));
    if (mail) mails.push(mail);
  }
  return enqueueMail(deps.queue, mails, deps.logger);
}

/** The digest queue's name, with the instance prefix the other queues use. */
export function weeklyDigestQueueName(config: Pick<Config, 'jobs'>): string {
  return `${config.jobs.queuePrefix ? `${config.jobs.queuePrefix}-` : ''}weekly-digest`;
}

/**
 * Schedules the weekly digest on pg-boss (one run per cron slot, whichever instance picks it up)
 * and works it. Returns a stop function.
 */
export async function startWeeklyDigest(config: Config, queue: Queue, deps: { logger: Logger }) {
  const name = weeklyDigestQueueName(config);
  await queue.boss.createQueue(name, { name, policy: 'standard', retryLimit: 2, retryDelay: 60, expireInSeconds: 600 });
  await queue.boss.schedule(name, WEEKLY_DIGEST_CRON);
  const workerId = await queue.boss.work(name, async () => {
    const count = await queueWeeklyDigests({ config, queue, logger: deps.logger });
    deps.logger.info({ count }, 'weekly digests queued');
  });
  return {
    async stop() {
      await queue.boss.offWork({ id: workerId });
    },
  };
}
