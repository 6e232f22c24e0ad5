import type { ComponentProps } from 'react';
import { cn } from '@/lib/cn';
import './story-prose.css';

/**
 * Type for a rendered story body (HTML from `renderStory`, already sanitized): Merriweather with
 * air around it, claims underlined in the accent with a small mark after them, claims that do
 * not hold highlighted with a wavy underline and a "!" (never by colour alone), caution blocks
 * boxed. Written as variants so Tailwind sees every class in this file.
 */
const prose = [
  'story-prose font-serif text-story text-ink break-words',
  '[&_p]:my-4 [&_p:first-child]:mt-0',
  '[&_h1]:mt-8 [&_h1]:mb-3 [&_h1]:text-xl [&_h1]:font-bold',
  '[&_h2]:mt-8 [&_h2]:mb-3 [&_h2]:text-lg [&_h2]:font-bold',
  '[&_h3]:mt-6 [&_h3]:mb-2 [&_h3]:text-md [&_h3]:font-bold',
  '[&_h4]:mt-5 [&_h4]:mb-2 [&_h4]:font-bold',
  '[&_ul]:my-4 [&_ul]:list-disc [&_ul]:pl-6 [&_ol]:my-4 [&_ol]:list-decimal [&_ol]:pl-6 [&_li]:my-1',
  '[&_blockquote]:my-4 [&_blockquote]:border-l-2 [&_blockquote]:border-line [&_blockquote]:pl-4 [&_blockquote]:text-ink-muted',
  '[&_code]:figures [&_code]:rounded-sm [&_code]:bg-paper-2 [&_code]:px-1 [&_code]:text-[0.88em]',
  '[&_pre]:my-4 [&_pre]:overflow-x-auto [&_pre]:rounded-md [&_pre]:bg-paper-2 [&_pre]:p-3 [&_pre]:text-sm [&_pre_code]:bg-transparent [&_pre_code]:p-0',
  '[&_img]:my-4 [&_img]:h-auto [&_img]:max-w-full [&_img]:rounded-md [&_img]:border [&_img]:border-rule',
  '[&_hr]:my-8 [&_hr]:border-rule',
  '[&_table]:my-4 [&_table]:font-sans [&_table]:text-sm [&_td]:border [&_td]:border-rule [&_td]:px-2 [&_th]:border [&_th]:border-rule [&_th]:px-2',
  // Claims: accent underline; the mark after them is in story-prose.css.
  '[&_a.claim]:cursor-pointer [&_a.claim]:text-ink [&_a.claim]:underline [&_a.claim]:decoration-accent [&_a.claim]:decoration-2 [&_a.claim]:underline-offset-[0.22em]',
  '[&_a.claim:hover]:bg-accent-wash [&_a.claim:hover]:text-ink',
  // A claim that does not hold: wavy underline and a washed background (and "!" instead of the mark).
  '[&_a.claim:not([data-claim-state=ok])]:bg-danger-wash [&_a.claim:not([data-claim-state=ok])]:decoration-wavy [&_a.claim:not([data-claim-state=ok])]:decoration-danger',
  '[&_.claim-broken]:bg-danger-wash [&_.claim-broken]:underline [&_.claim-broken]:decoration-danger [&_.claim-broken]:decoration-wavy [&_.claim-broken]:decoration-2',
  // Caution blocks: a boxed note in the interface type, a warning sign before the title.
  '[&_aside.caution]:my-5 [&_aside.caution]:rounded-md [&_aside.caution]:border [&_aside.caution]:border-l-4 [&_aside.caution]:border-rule [&_aside.caution]:border-l-ink [&_aside.caution]:bg-paper-2 [&_aside.caution]:px-4 [&_aside.caution]:py-3',
  '[&_aside.caution]:font-sans [&_aside.caution]:text-sm [&_aside.caution_p]:my-1.5',
  "[&_.caution-title]:font-semibold [&_.caution-title]:before:mr-1 [&_.caution-title]:before:content-['⚠']",
].join(' ');

/** A rendered story body. `html` must come from `renderStory` (it sanitizes). */
export function StoryProse({ html, className, ...props }: Omit<ComponentProps<'div'>, 'children' | 'dangerouslySetInnerHTML'> & { html: string }) {
  // The HTML is sanitized by renderStory with DOMPurify and an allowlist of tags and attributes.
  return <div className={cn(prose, className)} dangerouslySetInnerHTML={{ __html: html }} {...props} />;
}
