import { cachedPublicStory, currentPublicPage } from './public.service';

function attr(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/**
 * Open Graph and Twitter card tags for a public story, written into the HTML the server sends,
 * so link previews (whose crawlers run no scripts) show the title, summary and cover still.
 * Null when the story is not public.
 */
export async function storyShareTags(storyId: number, publicUrl: string): Promise<string | null> {
  const page = await currentPublicPage(storyId);
  if (page === null) return null;
  const story = await cachedPublicStory(page, null);
  const url = `${publicUrl}/stories/${storyId}`;
  const description = story.summary || `A build story by ${story.builder.displayName}, every claim linked to its reading and clip.`;
  const tags = [
    ['property', 'og:site_name', 'Benchproof'],
    ['property', 'og:type', 'article'],
    ['property', 'og:title', story.title],
    ['property', 'og:description', description],
    ['property', 'og:url', url],
    ...(story.coverUrl ? [['property', 'og:image', `${publicUrl}${story.coverUrl}`]] : []),
    ['name', 'twitter:card', story.coverUrl ? 'summary_large_image' : 'summary'],
    ['name', 'twitter:title', story.title],
    ['name', 'twitter:description', description],
    ...(story.coverUrl ? [['name', 'twitter:image', `${publicUrl}${story.coverUrl}`]] : []),
  ];
  // schema.org Article as JSON-LD, for search engines (https://schema.org/Article).
  const article = {
    '@context': 'https://schema.org',
    '@type': 'Article',
    headline: story.title,
    description,
    url,
    mainEntityOfPage: url,
    datePublished: story.publishedAt,
    ...(story.workDate && { dateCreated: story.workDate }),
    ...(story.coverUrl && { image: `${publicUrl}${story.coverUrl}` }),
    author: { '@type': 'Person', name: story.builder.displayName, url: `${publicUrl}/builders/${encodeURIComponent(story.builder.login)}` },
    publisher: { '@type': 'Organization', name: 'Benchproof', url: publicUrl },
    keywords: [...story.tags.machine, ...story.tags.component, ...story.tags.operation].join(', ') || undefined,
  };
  return [
    `<link rel="canonical" href="${attr(url)}" data-share="server">`,
    ...tags.map(([k, n, v]) => `<meta ${k}="${attr(n!)}" content="${attr(v!)}" data-share="server">`),
    `<script type="application/ld+json" data-share="server">${jsonForScript(article)}</script>`,
  ].join('');
}

/** JSON inside a script element: `<` escaped, so no text in it can close the element or open a comment. */
export function jsonForScript(value: unknown): string {
  return JSON.stringify(value).replace(/</g, '\\u003c').replace(/\u2028/g, '\\u2028').replace(/\u2029/g, '\\u2029');
}
