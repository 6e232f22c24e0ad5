import { useInfiniteQuery, useSuspenseQuery } from '@tanstack/react-query';
import { data, Link, useParams, type LoaderFunctionArgs, type Params } from 'react-router-dom';
import { Avatar } from '@/components/ui/avatar';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { FollowButton } from '@/features/follows/components/follow-button';
import { ApiError } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { textParam } from '@/lib/route-params';
import { publicQueries } from '../api/public-queries';
import { ShareMeta } from '../components/share-meta';
import { StoryGrid } from '../components/story-card';
import { instantDay } from '@/lib/dates';

/** The address's login, read as the server's `publicBuilderParamsSchema` reads it; 404 when it is not one. */
function loginFrom(params: Params): string {
  const login = textParam(params.login, 64);
  if (login === null) throw data(null, { status: 404 });
  return login;
}

export async function loader({ params }: LoaderFunctionArgs) {
  const login = loginFrom(params);
  try {
    await queryClient.ensureQueryData(publicQueries.builder(login));
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
    throw error;
  }
  return null;
}

/** A builder as readers see them: who, which shop, their published builds and entries, and a way to follow. */
export function Component() {
  const login = loginFrom(useParams());
  const { data: profile } = useSuspenseQuery(publicQueries.builder(login));
  return (
    <>
      <ShareMeta
        title={`${profile.displayName}${profile.shop ? `, ${profile.shop}` : ''}`}
        description={profile.bio ?? `Published builds of ${profile.displayName} on Benchproof.`}
        path={`/builders/${encodeURIComponent(profile.login)}`}
        imagePath={profile.avatarUrl}
        type="profile"
        feed={{ title: `${profile.displayName} on Benchproof`, href: profile.feedUrl }}
      />
      <header className="mb-10 flex flex-wrap items-start gap-5">
        <Avatar name={profile.displayName} src={profile.avatarUrl} size="lg" className="size-16 text-lg" />
        <div className="min-w-0 flex-1">
          <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">Builder</p>
          <h1 className="text-2xl font-semibold tracking-tight">{profile.displayName}</h1>
          <p className="text-sm text-ink-muted">
            {profile.shop && <span className="font-medium text-ink">{profile.shop} · </span>}
            <span className="figures">@{profile.login}</span> ·{' '}
            <span data-follower-count={profile.followerCount}>
              {profile.followerCount === 1 ? '1 follower' : `${profile.followerCount} followers`}
            </span>
          </p>
          {profile.bio && <p className="mt-3 max-w-prose font-serif text-story">{profile.bio}</p>}
          <div className="mt-4 flex flex-wrap items-center gap-3">
            <FollowButton profile={profile} />
            {profile.following && (
              <span className="text-sm text-ink-muted">
                {profile.emailOnPublish ? 'You get an e-mail when they publish.' : 'No e-mail when they publish.'}{' '}
                <Link to="/account/follows">Change</Link>
              </span>
            )}
            <a href={profile.feedUrl} className="text-sm">
              Feed (Atom)
            </a>
          </div>
        </div>
      </header>

      <section aria-labelledby="builds-heading" className="mb-12">
        <h2 id="builds-heading" className="mb-3 text-lg font-semibold">
          Published builds
        </h2>
        {profile.builds.length === 0 ? (
          <EmptyState title="No published builds yet">A build appears here once a moderator has checked and published one of its entries.</EmptyState>
        ) : (
          <ul className="grid gap-4 sm:grid-cols-2">
            {profile.builds.map((build) => (
              <li key={build.id} className="flex gap-4 rounded-lg border border-rule p-3">
                <div className="aspect-video w-32 shrink-0 overflow-hidden rounded-sm border border-rule bg-paper-2">
                  {build.coverUrl && <img src={build.coverUrl} alt="" loading="lazy" className="size-full object-cover" />}
                </div>
                <div className="min-w-0">
                  <h3 className="font-semibold">
                    <Link to={`/public/builds/${build.id}`}>{build.title}</Link>
                  </h3>
                  <p className="line-clamp-2 text-sm text-ink-muted">{build.subject}</p>
                  <p className="mt-1 text-xs text-ink-muted">
                    {build.entryCount === 1 ? '1 story' : `${build.entryCount} stories`} · latest {instantDay(build.latestPublishedAt)}
                  </p>
                </div>
              </li>
            ))}
          </ul>
        )}
      </section>

      <BuilderStories login={profile.login} name={profile.displayName} />
    </>
  );
}

function BuilderStories({ login, name }: { login: string; name: string }) {
  const stories = useInfiniteQuery(publicQueries.stories({ builder: login }));
  const items = stories.data?.pages.flatMap((p) => p.items) ?? [];
  return (
    <section aria-labelledby="entries-heading" className="flex flex-col gap-4">
      <h2 id="entries-heading" className="text-lg font-semibold">
        Stories by {name}
      </h2>
      {stories.isPending ? (
        <LoadingState label="Loading stories…" />
      ) : stories.isError ? (
        <ErrorState title="The stories could not be loaded" error={stories.error} onRetry={() => void stories.refetch()} retrying={stories.isRefetching} />
      ) : items.length === 0 ? (
        <EmptyState title="No published stories yet">Follow to get an e-mail when the first one is published.</EmptyState>
      ) : (
        <>
          <StoryGrid stories={items} />
          <LoadMore query={stories} shown={items.length} what="stories" />
        </>
      )}
    </section>
  );
}
