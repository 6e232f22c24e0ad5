import { builderFeedPath, SITE_FEED_PATH } from '@shared/public/feed-paths';
import { notFound } from '../../http/errors';
import { listPublicStories, isBuilderAccount } from '../public/public.service';
import { User } from '../users/user.model';
import { atomDocument, type AtomEntry } from './atom';

/** How many of the newest stories a feed carries. */
export const FEED_SIZE = 50;

/** Used for `updated` of the site feed before anything is published (a feed must have one). */
const SITE_EPOCH = new Date('2026-01-01T00:00:00Z');

/**
 * Tag URIs (RFC 4151) that never change: the site's host name and the year the scheme was
 * chosen, then what is named. A story keeps its id across revisions, so a feed reader shows a
 * revision as the same entry updated.
 */
function tagBase(publicUrl: string): string {
  return `tag:${new URL(publicUrl).hostname},2026:`;
}

async function entries(publicUrl: string, builder?: string): Promise<AtomEntry[]> {
  const { items } = await listPublicStories({ limit: FEED_SIZE, ...(builder && { builder }) });
  const tag = tagBase(publicUrl);
  return items.map((s) => ({
    id: `${tag}story/${s.storyId}`,
    title: s.title,
    updated: new Date(s.publishedAt),
    alternate: `${publicUrl}/stories/${s.storyId}`,
    summary: s.summary || `A story of ${s.build.title}.`,
    author: { name: s.builder.displayName, uri: `${publicUrl}/builders/${encodeURIComponent(s.builder.login)}` },
    categories: [...new Set([...s.tags.machine, ...s.tags.component, ...s.tags.operation])],
  }));
}

/** The whole site's feed of published stories, newest first. */
export async function siteFeed(publicUrl: string): Promise<string> {
  const list = await entries(publicUrl);
  return atomDocument({
    id: `${tagBase(publicUrl)}stories`,
    title: 'Benchproof: published build stories',
    subtitle: 'Stories whose every claim links to its reading, its moment in the clip and its computation, checked by a moderator.',
    updated: list[0]?.updated ?? SITE_EPOCH,
    self: `${publicUrl}${SITE_FEED_PATH}`,
    alternate: `${publicUrl}/`,
    author: { name: 'Benchproof', uri: `${publicUrl}/` },
    entries: list,
  });
}

/** One builder's feed; 404 for unknown logins and accounts that do not build. */
export async function builderFeed(publicUrl: string, login: string): Promise<string> {
  const user = await User.findOne({ where: { login } });
  if (!user || !(await isBuilderAccount(user))) throw notFound('There is no builder with that login.');
  const list = await entries(publicUrl, user.login);
  const profile = `${publicUrl}/builders/${encodeURIComponent(user.login)}`;
  return atomDocument({
    id: `${tagBase(publicUrl)}builder/${user.id}`,
    title: `${user.displayName}${user.shop ? `, ${user.shop}` : ''}: build stories on Benchproof`,
    updated: list[0]?.updated ?? user.createdAt,
    self: `${publicUrl}${builderFeedPath(user.login)}`,
    alternate: profile,
    author: { name: user.displayName, uri: profile },
    entries: list,
  });
}
