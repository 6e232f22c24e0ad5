import { useLayoutEffect } from 'react';

/**
 * Open Graph and Twitter card tags for a page, rendered where the page is (React 19 hoists
 * <title>, <meta> and <link> into the document head). For a public story the server also writes
 * them into the HTML it sends (for crawlers that run no scripts); once the page runs, these take
 * over and the server's copies are removed, so the head never holds two of each.
 */
export function ShareMeta({
  title,
  description,
  path,
  imagePath,
  type = 'article',
  feed,
}: {
  title: string;
  description: string;
  /** The page's own path, made absolute here. */
  path: string;
  imagePath?: string | null;
  type?: 'article' | 'website' | 'profile';
  feed?: { title: string; href: string };
}) {
  useLayoutEffect(() => {
    for (const node of document.head.querySelectorAll('[data-share="server"]')) node.remove();
  }, []);
  const origin = typeof window === 'undefined' ? '' : window.location.origin;
  const url = `${origin}${path}`;
  const image = imagePath ? new URL(imagePath, origin || 'http://localhost').toString() : null;
  const text = description.trim() || 'A build story whose every figure links to its reading, its clip and its spec.';
  return (
    <>
      <title>{`${title} · Benchproof`}</title>
      <meta name="description" content={text} />
      <link rel="canonical" href={url} />
      <meta property="og:site_name" content="Benchproof" />
      <meta property="og:type" content={type} />
      <meta property="og:title" content={title} />
      <meta property="og:description" content={text} />
      <meta property="og:url" content={url} />
      {image && <meta property="og:image" content={image} />}
      <meta name="twitter:card" content={image ? 'summary_large_image' : 'summary'} />
      <meta name="twitter:title" content={title} />
      <meta name="twitter:description" content={text} />
      {image && <meta name="twitter:image" content={image} />}
      {feed && <link rel="alternate" type="application/atom+xml" title={feed.title} href={feed.href} />}
    </>
  );
}
