import type { Role } from '@shared/users/user.schema';

/**
 * Which roles may open each role-gated area. The server enforces the same
 * rules; this map only decides what the client shows and where it redirects.
 * Admins run the site, so they may also open the review queue.
 */
export const areaAccess = {
  builds: ['builder'],
  instruments: ['builder'],
  // Moderators check readings against the specs they cite, so they may read the library too.
  specs: ['builder', 'moderator', 'admin'],
  review: ['moderator', 'admin'],
  // One story's review sheet: reviewers, and its builder (to read and answer the flags); the server says 404 to other builders.
  storyReview: ['builder', 'moderator', 'admin'],
  adminUsers: ['admin'],
  adminOutbox: ['admin'],
} as const satisfies Record<string, readonly Role[]>;

export type Area = keyof typeof areaAccess;

/** True when `role` may open `area`. */
export function canOpen(area: Area, role: Role | null | undefined): boolean {
  return role != null && (areaAccess[area] as readonly Role[]).includes(role);
}

/** A role in a sentence: "a builder", "an admin". */
export function roleWithArticle(role: Role): string {
  const name = roleLabels[role].toLowerCase();
  return `${/^[aeiou]/.test(name) ? 'an' : 'a'} ${name}`;
}

/** Human names for roles, for menus, badges and messages. */
export const roleLabels: Record<Role, string> = {
  follower: 'Follower',
  builder: 'Builder',
  moderator: 'Moderator',
  admin: 'Admin',
};
