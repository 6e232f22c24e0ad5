import { useEffect, useId, useState, type FormEvent } from 'react';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import { useSearchParams } from 'react-router-dom';
import { SITE_FEED_PATH } from '@shared/public/feed-paths';
import { authQueries } from '@/features/auth/api/auth-queries';
import { publicQueries, type StoryFilters } from '@/features/public/api/public-queries';
import { ShareMeta } from '@/features/public/components/share-meta';
import { StoryGrid } from '@/features/public/components/story-card';
import { Button, ButtonLink } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Input } from '@/components/ui/field';
import { LoadMore } from '@/components/ui/load-more';

function filtersFrom(params: URLSearchParams): StoryFilters {
  const text = (name: string) => params.get(name)?.trim() || undefined;
  return { q: text('q'), tag: text('tag'), builder: text('builder'), outOfSpec: params.get('verdict') === 'out-of-spec' || undefined };
}

const hasFilters = (f: StoryFilters) => Boolean(f.q || f.tag || f.builder || f.outOfSpec);

/**
 * Home: the newest published stories, "from builders you follow" for a signed-in reader, and
 * browsing by words, tag, builder and "has an out-of-spec clearance", a page at a time.
 */
export function Component() {
  const me = useQuery(authQueries.me());
  const [params] = useSearchParams();
  const filters = filtersFrom(params);
  const filtered = hasFilters(filters);

  return (
    <>
      <ShareMeta
        title="Build stories you can check"
        description="Engine builders’ stories whose every clearance links to its reading, the clip it was taken in and the spec it was judged against."
        path="/"
        type="website"
        feed={{ title: 'Benchproof: newest stories', href: SITE_FEED_PATH }}
      />
      <header className="mb-8 max-w-3xl">
        <h1 className="font-serif text-2xl leading-tight font-bold tracking-tight sm:text-[2.5rem] sm:leading-[1.15]">Build stories you can check</h1>
        <p className="mt-3 font-serif text-story text-ink-muted">
          Builders film their bench work and log each reading at the moment it was taken. Every clearance in a story links back to its
          reading, the clip it came from and the spec it was judged against, so you can see the blade in the gap, not just the number.
        </p>
      </header>

      {me.data && !filtered && <FollowingSection />}

      <section aria-labelledby="stories-heading" className="flex flex-col gap-5">
        <div className="flex flex-wrap items-baseline justify-between gap-3">
          <h2 id="stories-heading" className="text-lg font-semibold">
            {filtered ? 'Stories found' : 'Newest stories'}
          </h2>
          <a href={SITE_FEED_PATH} className="text-sm">
            Feed of new stories (Atom)
          </a>
        </div>
        <BrowseForm filters={filters} />
        <StoryList filters={filters} signedOut={me.isSuccess && me.data === null} />
      </section>
    </>
  );
}

function FollowingSection() {
  const following = useInfiniteQuery(publicQueries.following(3));
  const items = following.data?.pages.flatMap((p) => p.items) ?? [];
  return (
    <section aria-labelledby="following-heading" className="mb-12 flex flex-col gap-4">
      <h2 id="following-heading" className="text-lg font-semibold">
        From builders you follow
      </h2>
      {following.isPending ? (
        <LoadingState label="Loading stories from builders you follow…" />
      ) : following.isError ? (
        <ErrorState title="Stories from builders you follow could not be loaded" error={following.error} onRetry={() => void following.refetch()} retrying={following.isRefetching} />
      ) : items.length === 0 ? (
        <EmptyState title="Nothing from builders you follow yet" action={<ButtonLink to="/account/follows">Your follows and e-mail</ButtonLink>}>
          Follow a builder from their profile (their name on any story) and their new entries appear here, newest first.
        </EmptyState>
      ) : (
        <>
          <StoryGrid stories={items} />
          <LoadMore query={following} shown={items.length} what="stories" />
        </>
      )}
    </section>
  );
}

function BrowseForm({ filters }: { filters: StoryFilters }) {
  const [, setParams] = useSearchParams();
  const [draft, setDraft] = useState({ q: filters.q ?? '', tag: filters.tag ?? '', builder: filters.builder ?? '' });
  const outOfSpecId = useId();
  // The address is the truth (Back, a shared link): follow it when it changes.
  useEffect(() => setDraft({ q: filters.q ?? '', tag: filters.tag ?? '', builder: filters.builder ?? '' }), [filters.q, filters.tag, filters.builder]);

  function apply(next: StoryFilters) {
    const params = new URLSearchParams();
    if (next.q) params.set('q', next.q);
    if (next.tag) params.set('tag', next.tag);
    if (next.builder) params.set('builder', next.builder);
    if (next.outOfSpec) params.set('verdict', 'out-of-spec');
    setParams(params, { preventScrollReset: true });
  }

  function submit(event: FormEvent) {
    event.preventDefault();
    apply({ q: draft.q.trim() || undefined, tag: draft.tag.trim() || undefined, builder: draft.builder.trim() || undefined, outOfSpec: filters.outOfSpec });
  }

  return (
    <form role="search" aria-label="Browse stories" onSubmit={submit} className="grid gap-3 rounded-lg border border-rule bg-paper-2/40 p-4 sm:grid-cols-[2fr_1fr_1fr_auto] sm:items-end">
      <Field label="Words, figures or serials" hint={'In the story, its claims, parts and builder; "quotes" for a phrase'}>
        <Input type="search" value={draft.q} onChange={(e) => setDraft({ ...draft, q: e.target.value })} placeholder="end float, 0.0047, ring gap…" />
      </Field>
      <Field label="Tag" hint="Machine, part or operation">
        <Input value={draft.tag} onChange={(e) => setDraft({ ...draft, tag: e.target.value })} placeholder="oil pump" />
      </Field>
      <Field label="Builder" hint="Their login">
        <Input value={draft.builder} onChange={(e) => setDraft({ ...draft, builder: e.target.value })} placeholder="demo-builder" autoCapitalize="none" />
      </Field>
      <Button type="submit" variant="primary">
        Search
      </Button>
      <div className="flex flex-wrap items-center gap-x-4 gap-y-2 sm:col-span-4">
        <label htmlFor={outOfSpecId} className="flex items-center gap-2 text-sm">
          <input
            id={outOfSpecId}
            type="checkbox"
            checked={Boolean(filters.outOfSpec)}
            onChange={(e) => apply({ ...filters, outOfSpec: e.target.checked || undefined })}
            className="size-4 accent-ink"
          />
          Only builds with an out-of-spec clearance
        </label>
        {hasFilters(filters) && (
          <Button variant="quiet" size="sm" onClick={() => apply({})}>
            Clear the search
          </Button>
        )}
      </div>
    </form>
  );
}

function StoryList({ filters, signedOut }: { filters: StoryFilters; signedOut: boolean }) {
  const stories = useInfiniteQuery(publicQueries.stories(filters));
  const items = stories.data?.pages.flatMap((p) => p.items) ?? [];
  if (stories.isPending) return <LoadingState label="Loading stories…" />;
  if (stories.isError) {
    return <ErrorState title="The stories could not be loaded" error={stories.error} onRetry={() => void stories.refetch()} retrying={stories.isRefetching} />;
  }
  if (items.length === 0) {
    return hasFilters(filters) ? (
      <EmptyState title="No published story matches">
        Try fewer words, another tag, or clear the search to see every story. Tags and logins are matched exactly.
      </EmptyState>
    ) : (
      <EmptyState
        title="No stories published yet"
        action={
          <>
            <ButtonLink to="/calculator" variant="secondary">
              Open the clearance calculator
            </ButtonLink>
            {signedOut && (
              <ButtonLink to="/sign-in" variant="primary">
                Sign in to follow builders
              </ButtonLink>
            )}
          </>
        }
      >
        Stories appear here once a builder publishes one and a moderator has checked its readings. Meanwhile you can work a clearance
        through the calculator.
      </EmptyState>
    );
  }
  const searchMatch = stories.data?.pages[0]?.searchMatch ?? null;
  return (
    <>
      {searchMatch === 'words' && <p className="text-sm text-ink-muted">Best match first.</p>}
      {searchMatch === 'similar' && (
        <p className="text-sm text-ink-muted" role="status">
          No story has all of those words. These stories have titles like them, or the text in their title or summary.
        </p>
      )}
      <StoryGrid stories={items} />
      <LoadMore query={stories} shown={items.length} what="stories" />
    </>
  );
}
