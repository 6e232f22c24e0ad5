import { QueryTypes } from 'sequelize';
import { PUBLIC_STORY_SQL } from '../public/publication';
import { Story } from '../stories/story.model';

/** The most URLs one sitemap file may list (sitemaps.org protocol 0.9). */
export const SITEMAP_MAX_URLS = 50_000;

function xml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' })[c]!);
}

/**
 * The public pages as a sitemap (sitemaps.org 0.9): the home page, every public story with the
 * day its current revision was published, each build with a public story, each builder with one.
 * What is not public is never listed, so a crawler is sent only where a reader may go.
 */
export async function sitemapXml(publicUrl: string): Promise<string> {
  const rows = await Story.sequelize!.query<{ story_id: number; build_id: number; login: string; published_at: Date }>(
    `SELECT s.id AS story_id, s.build_id, u.login, p.published_at
       FROM stories s
       JOIN story_publications p ON p.id = s.published_publication_id
       JOIN builds b ON b.id = s.build_id
       JOIN users u ON u.id = b.owner_id
      WHERE ${PUBLIC_STORY_SQL}
      ORDER BY p.published_at DESC, s.id DESC
      LIMIT :limit`,
    { type: QueryTypes.SELECT, replacements: { limit: SITEMAP_MAX_URLS - 1 } },
  );
  const day = (d: Date) => new Date(d).toISOString().slice(0, 10);
  const urls = new Map<string, string | null>([[`${publicUrl}/`, rows[0] ? day(rows[0].published_at) : null]]);
  for (const r of rows) urls.set(`${publicUrl}/stories/${r.story_id}`, day(r.published_at));
  // Newest first, so a build's or builder's date is that of their latest public story.
  for (const r of rows) if (!urls.has(`${publicUrl}/public/builds/${r.build_id}`)) urls.set(`${publicUrl}/public/builds/${r.build_id}`, day(r.published_at));
  for (const r of rows) {
    const builder = `${publicUrl}/builders/${encodeURIComponent(r.login)}`;
    if (!urls.has(builder)) urls.set(builder, day(r.published_at));
  }
  const entries = [...urls].slice(0, SITEMAP_MAX_URLS).map(([loc, lastmod]) => `  <url><loc>${xml(loc)}</loc>${lastmod ? `<lastmod>${lastmod}</lastmod>` : ''}</url>`);
  return `<?xml version="1.0" encoding="UTF-8"?>\n<urlset xmlns="http://www.sitemaps.org/schemas/sitemap/0.9">\n${entries.join('\n')}\n</urlset>\n`;
}

/**
 * robots.txt (RFC 9309): the public pages are open to crawlers; the API, sign-in, the builder's
 * and the moderator's screens are not, and the sitemap is named.
 */
export function robotsTxt(publicUrl: string): string {
  return [
    'User-agent: *',
    'Disallow: /api/',
    'Disallow: /auth/',
    'Disallow: /admin/',
    'Disallow: /review',
    'Disallow: /builds',
    'Disallow: /instruments',
    'Disallow: /specs',
    'Disallow: /account',
    'Disallow: /sign-in',
    'Disallow: /stories/*/edit',
    'Allow: /',
    '',
    `Sitemap: ${publicUrl}/sitemap.xml`,
    '',
  ].join('\n');
}
