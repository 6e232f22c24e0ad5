/**
 * Atom 1.0 documents (RFC 4287), written as text: the vocabulary is small and fixed, so a
 * builder library would add more than it saves. Every text goes through `xmlText`.
 */

// XML 1.0 §2.2: only these characters may appear at all; anything else is dropped.
// eslint-disable-next-line no-control-regex
const NOT_XML_CHAR = /[^\u0009\u000A\u000D\u0020-\uD7FF\uE000-\uFFFD\u{10000}-\u{10FFFF}]/gu;

/** Text escaped for element content and attribute values. */
export function xmlText(text: string): string {
  return text
    .replace(NOT_XML_CHAR, '')
    .replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' })[c]!);
}

/** A person construct (RFC 4287 §3.2). */
export interface AtomPerson {
  name: string;
  uri?: string;
}

/** An entry (RFC 4287 §4.1.2). */
export interface AtomEntry {
  id: string;
  title: string;
  updated: Date;
  published?: Date;
  alternate: string;
  summary: string;
  author: AtomPerson;
  categories: string[];
}

/** A feed (RFC 4287 §4.1.1). */
export interface AtomFeed {
  id: string;
  title: string;
  subtitle?: string;
  updated: Date;
  self: string;
  alternate: string;
  author: AtomPerson;
  entries: AtomEntry[];
}

function person(tag: 'author', p: AtomPerson): string {
  return `<${tag}><name>${xmlText(p.name)}</name>${p.uri ? `<uri>${xmlText(p.uri)}</uri>` : ''}</${tag}>`;
}

/** Dates as RFC 3339 timestamps in UTC (RFC 4287 §3.3), to the millisecond so a quick revision still moves `updated`. */
function date(d: Date): string {
  return d.toISOString();
}

/** The feed as an XML document. */
export function atomDocument(feed: AtomFeed): string {
  const lines = [
    '<?xml version="1.0" encoding="utf-8"?>',
    '<feed xmlns="http://www.w3.org/2005/Atom">',
    `  <id>${xmlText(feed.id)}</id>`,
    `  <title type="text">${xmlText(feed.title)}</title>`,
    ...(feed.subtitle ? [`  <subtitle type="text">${xmlText(feed.subtitle)}</subtitle>`] : []),
    `  <updated>${date(feed.updated)}</updated>`,
    `  <link rel="self" type="application/atom+xml" href="${xmlText(feed.self)}"/>`,
    `  <link rel="alternate" type="text/html" href="${xmlText(feed.alternate)}"/>`,
    `  ${person('author', feed.author)}`,
    '  <generator>Benchproof</generator>',
  ];
  for (const e of feed.entries) {
    lines.push(
      '  <entry>',
      `    <id>${xmlText(e.id)}</id>`,
      `    <title type="text">${xmlText(e.title)}</title>`,
      `    <updated>${date(e.updated)}</updated>`,
      ...(e.published ? [`    <published>${date(e.published)}</published>`] : []),
      `    <link rel="alternate" type="text/html" href="${xmlText(e.alternate)}"/>`,
      `    <summary type="text">${xmlText(e.summary)}</summary>`,
      `    ${person('author', e.author)}`,
      ...e.categories.map((c) => `    <category term="${xmlText(c)}"/>`),
      '  </entry>',
    );
  }
  lines.push('</feed>', '');
  return lines.join('\n');
}
