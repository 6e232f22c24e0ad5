import { useId, useRef, useState, type MouseEvent, type ReactNode, type RefObject } from 'react';
import { Popover } from 'radix-ui';
import { STANDING_NOTE } from '@shared/stories/cautions';
import type { RenderedClaim } from '@shared/stories/render';
import type { StoryTags } from '@shared/stories/story.schema';
import { storyTagGroups } from '@shared/stories/story.schema';
import { ClaimEvidence, type EvidenceLookup } from './claim-evidence';
import { StoryProse } from './story-prose';
import { longDayText } from '@/lib/dates';

export interface PreviewContent {
  title: string;
  summary: string;
  workDate: string | null;
  tags: StoryTags;
  coverUrl: string | null;
  html: string;
  claims: readonly RenderedClaim[];
}

const groupWords: Record<(typeof storyTagGroups)[number], string> = { machine: 'Machine', component: 'Component', operation: 'Operation' };

const workDateWords = longDayText;

/**
 * The entry as a reader will see it. A claim opens its evidence in a popover beside it, so the
 * reader never loses their place; Escape or the close button returns focus to the claim.
 */
export function StoryPreview({ content, lookup, banner }: { content: PreviewContent; lookup: EvidenceLookup; banner?: ReactNode }) {
  const [open, setOpen] = useState<{ claim: RenderedClaim | null; kind: RenderedClaim['kind']; key: string } | null>(null);
  const anchor = useRef<HTMLElement | null>(null);
  const headingId = useId();

  function onClick(event: MouseEvent<HTMLDivElement>) {
    const link = (event.target as HTMLElement).closest<HTMLAnchorElement>('a.claim');
    if (!link || !event.currentTarget.contains(link)) return;
    event.preventDefault();
    // Claims render in source order, so the n-th claim link is the n-th claim found.
    const index = Array.from(event.currentTarget.querySelectorAll('a.claim')).indexOf(link);
    const [kind, ...rest] = (link.dataset.claim ?? '').split(':');
    const key = rest.join(':');
    const claim = content.claims[index] ?? content.claims.find((c) => c.kind === kind && c.key === key) ?? null;
    anchor.current = link;
    setOpen({ claim, kind: (claim?.kind ?? kind) as RenderedClaim['kind'], key: claim?.key ?? key });
  }

  const tags = storyTagGroups.flatMap((group) => content.tags[group].map((tag) => ({ group, tag })));

  return (
    <article className="rounded-lg border border-rule bg-paper px-5 py-6 shadow-[0_1px_0_rgb(42_42_40/0.04)] sm:px-7" aria-labelledby={headingId}>
      {banner}
      {content.coverUrl && <img src={content.coverUrl} alt="Cover still" className="mb-5 aspect-video w-full rounded-md border border-rule bg-paper-2 object-cover" />}
      <header className="mb-5">
        {content.workDate && (
          <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">
            <time dateTime={content.workDate}>{workDateWords(content.workDate)}</time>
          </p>
        )}
        <h2 id={headingId} className="font-serif text-xl font-bold text-balance">
          {content.title.trim() || <span className="text-ink-muted">Untitled story</span>}
        </h2>
        {content.summary.trim() && <p className="mt-2 font-serif text-md text-ink-muted">{content.summary}</p>}
        {tags.length > 0 && (
          <ul aria-label="Tags" className="mt-3 flex flex-wrap gap-1.5">
            {tags.map(({ group, tag }) => (
              <li key={`${group}:${tag}`} className="rounded-sm border border-rule bg-paper-2/70 px-1.5 py-px text-xs">
                <span className="sr-only">{groupWords[group]}: </span>
                {tag}
              </li>
            ))}
          </ul>
        )}
      </header>

      {content.html.trim() ? (
        <StoryProse html={content.html} onClick={onClick} />
      ) : (
        <p className="font-serif text-story text-ink-muted">Nothing written yet. The text appears here as you type it.</p>
      )}

      <footer className="mt-8 border-t border-rule pt-3 text-sm text-ink-muted">
        <p>
          <strong className="font-semibold text-ink">Standing note.</strong> {STANDING_NOTE}
        </p>
      </footer>

      <Popover.Root open={open !== null} onOpenChange={(next) => !next && setOpen(null)}>
        <Popover.Anchor virtualRef={anchor as RefObject<HTMLElement>} />
        <Popover.Portal>
          <Popover.Content
            side="bottom"
            align="start"
            sideOffset={6}
            collisionPadding={12}
            aria-labelledby={`${headingId}-claim`}
            className="z-50 max-h-(--radix-popover-content-available-height) w-[min(24rem,calc(100vw-1.5rem))] overflow-auto rounded-lg border border-line bg-paper p-4 shadow-raised"
            onCloseAutoFocus={(event) => {
              event.preventDefault();
              anchor.current?.focus();
            }}
          >
            {open && (
              <>
                <ClaimEvidence
                  kind={open.kind}
                  claimKey={open.key}
                  status={open.claim?.status ?? null}
                  target={open.claim?.target ?? null}
                  lookup={lookup}
                  headingId={`${headingId}-claim`}
                />
                <div className="mt-3 flex justify-end">
                  <Popover.Close className="rounded-md border border-line px-2.5 py-1 text-sm hover:bg-paper-2">Close</Popover.Close>
                </div>
              </>
            )}
          </Popover.Content>
        </Popover.Portal>
      </Popover.Root>
    </article>
  );
}
