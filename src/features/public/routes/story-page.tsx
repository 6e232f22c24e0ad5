import { lazy, Suspense, useCallback, useEffect, useLayoutEffect, useRef, useState, type MouseEvent, type ReactNode } from 'react';
import { useQuery, useSuspenseQuery } from '@tanstack/react-query';
import { data, Link, useMatch, useNavigate, useParams, type LoaderFunctionArgs, type Params } from 'react-router-dom';
import type { PublicStory } from '@shared/public/public-story.schema';
import { ButtonLink, Button } from '@/components/ui/button';
import { useToast } from '@/components/ui/toast';
import { FollowButton } from '@/features/follows/components/follow-button';
import { StoryProse } from '@/features/stories/components/story-prose';
import { ApiError } from '@/lib/api';
import { cn } from '@/lib/cn';
import { queryClient } from '@/lib/query-client';
import { positiveIntParam } from '@/lib/route-params';
import { publicQueries } from '../api/public-queries';
import { ClaimPanel } from '../components/claim-panel';
import { ClaimsIndex } from '../components/claims-index';
import { PrintEvidence } from '../components/print-evidence';
import { ShareMeta } from '../components/share-meta';
import { UnitsSwitch } from '../components/units-switch';
import { dateTimeAttr, dayText, instantDay } from '@/lib/dates';
import { useUnitSystem } from '../lib/units';
import { entryUnitOf } from '../lib/unit-choice';
import { checkedSummary, claimPath, findClaim, listWords } from '../lib/story-view';
import '../components/public-story.css';

// Below the fold and not needed to read the text: each in its own chunk.
const StoryComparisons = lazy(() => import('../components/story-comparisons'));
const QuestionsSection = lazy(() => import('../components/questions-section'));

/** The address's storyId, read as the server's `publicStoryParamsSchema` reads it; 404 when it is not one. */
function storyIdFrom(params: Params): number {
  const storyId = positiveIntParam(params.storyId);
  if (storyId === null) throw data(null, { status: 404 });
  return storyId;
}

export async function loader({ params }: LoaderFunctionArgs) {
  const storyId = storyIdFrom(params);
  try {
    await queryClient.ensureQueryData(publicQueries.story(storyId));
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
    throw error;
  }
  return null;
}

const WIDE = '(min-width: 64rem)';

/**
 * A published diary entry, set for reading, whose claims open their evidence beside the text at
 * their own address (/stories/:storyId/claims/clearance:end-float).
 */
export function Component() {
  const params = useParams();
  const storyId = storyIdFrom(params);
  // The panel's address is a child route with no page of its own; read its key from the address.
  const claimKey = useMatch('/stories/:storyId/claims/:claimKey')?.params.claimKey;
  const { data: story } = useSuspenseQuery(publicQueries.story(storyId));
  const navigate = useNavigate();
  const bodyRef = useRef<HTMLDivElement>(null);
  const headingRef = useRef<HTMLHeadingElement>(null);
  // The claim link the reader opened, so closing the panel puts focus back where they were.
  const openerRef = useRef<HTMLElement | null>(null);
  // The builder's system, when the reader has chosen none: the first claim's figure in a unit of one system.
  const units = useUnitSystem(entryUnitOf(story.claims.flatMap((c) => [c.clearance?.unit, c.readings[0]?.unit])));
  const claim = findClaim(story, claimKey);
  const open = claimKey !== undefined;

  const openClaim = useCallback(
    (kind: 'reading' | 'clearance', key: string, opener: HTMLElement | null) => {
      openerRef.current = opener;
      navigate(claimPath(story.storyId, kind, key), { preventScrollReset: true });
    },
    [navigate, story.storyId],
  );

  const close = useCallback(() => {
    navigate(`/stories/${story.storyId}`, { preventScrollReset: true });
  }, [navigate, story.storyId]);

  // Claim links point at their panel's address (so they can be copied and opened in a new tab) and say what they control.
  useLayoutEffect(() => {
    const body = bodyRef.current;
    if (!body) return;
    for (const a of body.querySelectorAll<HTMLAnchorElement>('a.claim[data-claim]')) {
      const [kind, key] = (a.dataset.claim ?? '').split(':');
      if ((kind === 'reading' || kind === 'clearance') && key) a.setAttribute('href', claimPath(story.storyId, kind, key));
      a.setAttribute('aria-controls', 'claim-panel');
      a.setAttribute('aria-expanded', String(a.dataset.claim === claimKey));
      if (a.dataset.claim === claimKey) a.setAttribute('aria-current', 'true');
      else a.removeAttribute('aria-current');
    }
  }, [story.html, story.storyId, claimKey]);

  // Opening moves focus into the panel; closing puts it back on the claim.
  const wasOpen = useRef(open);
  useEffect(() => {
    if (open) {
      headingRef.current?.focus({ preventScroll: true });
      // A phone's sheet covers the lower part of the screen: keep the claim above it.
      const opener = openerRef.current ?? bodyRef.current?.querySelector<HTMLElement>(`a.claim[data-claim="${CSS.escape(claimKey ?? '')}"]`);
      if (opener && !window.matchMedia(WIDE).matches) {
        const top = opener.getBoundingClientRect().top;
        if (top > window.innerHeight * 0.25 || top < 0) window.scrollBy({ top: top - 72 });
      } else if (opener && !wasOpen.current) {
        const rect = opener.getBoundingClientRect();
        if (rect.top < 0 || rect.bottom > window.innerHeight) opener.scrollIntoView({ block: 'center' });
      }
    } else if (wasOpen.current) {
      const back = openerRef.current ?? bodyRef.current?.querySelector<HTMLElement>('a.claim[aria-current]') ?? null;
      back?.focus({ preventScroll: true });
    }
    wasOpen.current = open;
  }, [open, claimKey]);

  // Escape closes the panel from anywhere on the page.
  useEffect(() => {
    if (!open) return;
    const onKey = (event: KeyboardEvent) => {
      if (event.key === 'Escape' && !event.defaultPrevented) {
        event.preventDefault();
        close();
      }
    };
    document.addEventListener('keydown', onKey);
    return () => document.removeEventListener('keydown', onKey);
  }, [open, close]);

  function onBodyClick(event: MouseEvent<HTMLDivElement>) {
    const a = (event.target as HTMLElement).closest<HTMLAnchorElement>('a.claim[data-claim]');
    if (!a || event.button !== 0 || event.metaKey || event.ctrlKey || event.shiftKey || event.altKey) return;
    const [kind, key] = (a.dataset.claim ?? '').split(':');
    if ((kind !== 'reading' && kind !== 'clearance') || !key) return;
    event.preventDefault();
    if (a.dataset.claim === claimKey) close();
    else openClaim(kind, key, a);
  }

  function openFromIndex(index: number) {
    const c = story.claims[index];
    if (!c) return;
    const inText = bodyRef.current?.querySelectorAll<HTMLElement>(`a.claim[data-claim="${CSS.escape(`${c.kind}:${c.key}`)}"]`)[0] ?? null;
    openClaim(c.kind, c.key, inText);
  }

  const checked = checkedSummary(story);
  const path = `/stories/${story.storyId}`;

  return (
    <article className={cn('public-story', open && 'max-lg:pb-[70dvh]')} aria-labelledby="story-title">
      <ShareMeta
        title={story.title}
        description={story.summary}
        path={path}
        imagePath={story.coverUrl}
        feed={{ title: `${story.builder.displayName} on Benchproof`, href: story.feedUrl }}
      />

      <div className="grid gap-x-12 lg:grid-cols-[minmax(0,42rem)_minmax(0,1fr)] print:block">
        <div className="min-w-0">
          <StoryHeader story={story} checked={checked} />
          <div className="mt-5 flex flex-wrap items-center justify-between gap-3 border-y border-rule py-2" data-print="hide">
            <UnitsSwitch choice={units} />
            <ShareActions path={path} />
          </div>

          <div ref={bodyRef} onClick={onBodyClick} className="mt-8">
            <StoryProse html={story.html} className="text-[1.125rem] leading-[1.9]" />
          </div>

          <Suspense fallback={null}>
            <StoryComparisons story={story} system={units.system} />
          </Suspense>

          <StoryFooter story={story} checked={checked} />
          <PrintEvidence story={story} system={units.system} />
          <AfterFirstPaint>
            <Suspense fallback={null}>
              <QuestionsSection storyId={story.storyId} builderName={story.builder.displayName} />
            </Suspense>
          </AfterFirstPaint>
        </div>

        <div className="min-w-0">
          {open && claimKey ? (
            <ClaimPanel claim={claim} claimKey={claimKey} system={units.system} onClose={close} headingRef={headingRef} />
          ) : (
            <ClaimsIndex story={story} system={units.system} onOpen={openFromIndex} />
          )}
        </div>
      </div>
    </article>
  );
}

function StoryHeader({ story, checked }: { story: PublicStory; checked: ReturnType<typeof checkedSummary> }) {
  const profile = useQuery(publicQueries.builder(story.builder.login));
  return (
    <header>
      <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">
        <Link to={`/public/builds/${story.build.id}`} className="text-ink-muted no-underline hover:underline">
          {story.build.title}
        </Link>
        {story.workDate && (
          <>
            {' · '}
            <time dateTime={dateTimeAttr(story.workDate)}>{dayText(story.workDate)}</time>
          </>
        )}
      </p>
      <h1 id="story-title" className="mt-2 font-serif text-2xl leading-tight font-bold tracking-tight sm:text-[2.5rem] sm:leading-[1.15]">
        {story.title}
      </h1>
      {story.summary && <p className="mt-3 font-serif text-lg leading-relaxed text-ink-muted">{story.summary}</p>}

      <div className="mt-5 flex flex-wrap items-center justify-between gap-3">
        <p className="text-sm">
          By{' '}
          <Link to={`/builders/${encodeURIComponent(story.builder.login)}`} className="font-semibold">
            {story.builder.displayName}
          </Link>
          {story.builder.shop && <span className="text-ink-muted">, {story.builder.shop}</span>}
          <span className="block text-ink-muted">
            Published <time dateTime={dateTimeAttr(story.publishedAt)}>{instantDay(story.publishedAt)}</time> · revision {story.revision}
            {checked.names.length > 0 && checked.lastAt && (
              <>
                {' · '}readings checked by {listWords(checked.names)} on {instantDay(checked.lastAt)}
              </>
            )}
          </span>
        </p>
        {profile.data && (
          <div data-print="hide">
            <FollowButton profile={profile.data} size="sm" />
          </div>
        )}
      </div>

      {story.coverUrl && (
        <figure className="mt-6">
          <img
            src={story.coverUrl}
            alt={`Evidence still from “${story.title}”`}
            className="aspect-video w-full rounded-md border border-rule bg-paper-2 object-cover"
            fetchPriority="high"
          />
          <figcaption className="mt-1.5 text-xs text-ink-muted">Cover: an evidence still from the build’s footage.</figcaption>
        </figure>
      )}
    </header>
  );
}

function ShareActions({ path }: { path: string }) {
  const { toast } = useToast();
  return (
    <div className="flex flex-wrap items-center gap-1">
      <Button
        variant="quiet"
        size="sm"
        onClick={() => {
          const url = `${window.location.origin}${path}`;
          navigator.clipboard?.writeText(url).then(
            () => toast({ tone: 'success', title: 'Link copied', description: url }),
            () => toast({ tone: 'error', title: 'The link could not be copied', description: `Copy it from the address bar: ${url}` }),
          );
        }}
      >
        Copy link
      </Button>
      <Button variant="quiet" size="sm" onClick={() => window.print()}>
        Print
      </Button>
    </div>
  );
}

function StoryFooter({ story, checked }: { story: PublicStory; checked: ReturnType<typeof checkedSummary> }) {
  return (
    <footer className="mt-10 flex flex-col gap-6">
      <aside role="note" aria-label="Standing note" className="rounded-md border border-l-4 border-rule border-l-ink bg-paper-2 px-4 py-3 text-sm">
        <p className="font-semibold">The builder’s own figures</p>
        <p className="mt-1">{story.standingNote}</p>
      </aside>

      <section aria-labelledby="record-heading" className="text-sm">
        <h2 id="record-heading" className="text-md font-semibold">
          The record
        </h2>
        <p className="mt-1 text-ink-muted">
          This is revision {story.revision}, published {instantDay(story.publishedAt)} by {story.publisher.displayName}.
          {checked.names.length > 0 && checked.lastAt
            ? ` Every reading and clearance it claims was checked against the footage by ${listWords(checked.names)} (last on ${instantDay(checked.lastAt)}).`
            : ''}{' '}
          The figures are as they were judged at publication; later edits by the builder appear only in a new revision.
        </p>
        {story.build.parts.length > 0 && (
          <>
            <h3 className="mt-4 text-sm font-semibold">Parts in this build</h3>
            <ul className="mt-1 flex flex-col gap-1">
              {story.build.parts.map((part) => (
                <li key={part.id} className="flex flex-wrap items-baseline gap-x-3">
                  <span>
                    {part.name} <span className="figures text-ink-muted">serial {part.serial}</span>
                  </span>
                  {part.pdfUrl && (
                    <a href={`${part.pdfUrl}?story=${story.storyId}`} className="text-xs">
                      Inspection sheet (PDF)
                    </a>
                  )}
                  {part.sheetUrl && (
                    <Link to={`/verify/parts/${part.id}?story=${story.storyId}&rev=${story.revision}`} className="text-xs">
                      Verify the figures
                    </Link>
                  )}
                </li>
              ))}
            </ul>
          </>
        )}
        <p className="mt-4 flex flex-wrap gap-x-4 gap-y-1" data-print="hide">
          <Link to={`/public/builds/${story.build.id}`}>All stories of {story.build.title}</Link>
          <a href={story.feedUrl}>{story.builder.displayName}’s feed (Atom)</a>
        </p>
      </section>
      <p className="hidden text-xs print:block">Printed from {typeof window === 'undefined' ? '' : window.location.origin}/stories/{story.storyId} (revision {story.revision}).</p>
      <ButtonLink to="/" variant="quiet" size="sm" className="self-start" data-print="hide">
        ← More stories
      </ButtonLink>
    </footer>
  );
}

/**
 * Renders its children once the page has loaded and the browser is idle, so what sits below the
 * story (the questions and their form code) is not fetched before the story itself is painted.
 */
function AfterFirstPaint({ children }: { children: ReactNode }) {
  const [ready, setReady] = useState(false);
  useEffect(() => {
    // Safari has no requestIdleCallback: a short timeout after load stands in for it.
    const idleApi = typeof window.requestIdleCallback === 'function';
    let handle: number | undefined;
    const schedule = () => {
      handle = idleApi ? window.requestIdleCallback(() => setReady(true), { timeout: 1500 }) : window.setTimeout(() => setReady(true), 200);
    };
    if (document.readyState === 'complete') schedule();
    else window.addEventListener('load', schedule, { once: true });
    return () => {
      window.removeEventListener('load', schedule);
      if (handle === undefined) return;
      if (idleApi) window.cancelIdleCallback(handle);
      else window.clearTimeout(handle);
    };
  }, []);
  return ready ? <>{children}</> : null;
}
