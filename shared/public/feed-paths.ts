// Addresses of the Atom feeds (RFC 4287). Kept apart from the schemas so a page can link a feed
// without loading zod.

/** The site's Atom feed of published stories. */
export const SITE_FEED_PATH = '/feeds/stories.atom';

/** A builder's Atom feed. */
export function builderFeedPath(login: string): string {
  return `/feeds/builders/${encodeURIComponent(login)}.atom`;
}
