import { Link } from 'react-router-dom';
import type { PublicStoryListItem } from '@shared/public/public-story.schema';
import { VerdictBadge } from '@/components/ui/badge';
import { dateTimeAttr, dayText, instantDay } from '@/lib/dates';
import { SearchSnippet } from './search-snippet';

/**
 * A published story in a list: cover still, title, builder, date, tags, an out-of-spec marker
 * (shape and words), and in search results the words around what matched.
 */
export function StoryCard({ story, headingLevel = 3 }: { story: PublicStoryListItem; headingLevel?: 2 | 3 }) {
  const Heading = headingLevel === 2 ? 'h2' : 'h3';
  const tags = [...story.tags.machine, ...story.tags.component, ...story.tags.operation];
  const when = story.workDate ?? story.publishedAt;
  return (
    <article className="group relative flex w-full flex-col overflow-hidden rounded-lg border border-rule bg-paper" data-story-card={story.storyId}>
      <div className="aspect-[16/9] border-b border-rule bg-paper-2">
        {story.coverUrl ? (
          <img src={story.coverUrl} alt="" loading="lazy" className="size-full object-cover" />
        ) : (
          <div className="flex size-full items-center justify-center text-xs text-ink-muted" aria-hidden="true">
            no cover still
          </div>
        )}
      </div>
      <div className="flex flex-1 flex-col gap-2 p-4">
        <p className="text-xs text-ink-muted">{story.build.title}</p>
        <Heading className="font-serif text-md leading-snug font-bold">
          {/* The whole card is the link's target area; the heading link is the one thing read out. */}
          <Link to={`/stories/${story.storyId}`} className="text-ink no-underline after:absolute after:inset-0 hover:underline">
            {story.title}
          </Link>
        </Heading>
        {story.summary && <p className="line-clamp-3 text-sm text-ink-muted">{story.summary}</p>}
        {story.snippet && <SearchSnippet snippet={story.snippet} />}
        <p className="mt-auto pt-1 text-xs text-ink-muted">
          <span className="font-medium text-ink">{story.builder.displayName}</span>
          {story.builder.shop && `, ${story.builder.shop}`} ·{' '}
          <time dateTime={dateTimeAttr(when)}>{story.workDate ? dayText(story.workDate) : instantDay(story.publishedAt)}</time> ·{' '}
          {story.claimCount === 1 ? '1 claim' : `${story.claimCount} claims`}
        </p>
        {(tags.length > 0 || story.outOfSpec) && (
          <div className="flex flex-wrap items-center gap-1.5">
            {story.outOfSpec && (
              <VerdictBadge verdict="does-not-conform" size="sm">
                Has an out-of-spec clearance
              </VerdictBadge>
            )}
            {tags.slice(0, 5).map((tag) => (
              <span key={tag} className="rounded-sm border border-rule px-1.5 py-px text-2xs text-ink-muted">
                {tag}
              </span>
            ))}
          </div>
        )}
      </div>
    </article>
  );
}

/** Cards in a responsive grid. */
export function StoryGrid({ stories, headingLevel }: { stories: readonly PublicStoryListItem[]; headingLevel?: 2 | 3 }) {
  return (
    <ul className="grid gap-5 sm:grid-cols-2 lg:grid-cols-3">
      {stories.map((story) => (
        <li key={`${story.storyId}:${story.revision}`} className="flex">
          <StoryCard story={story} headingLevel={headingLevel} />
        </li>
      ))}
    </ul>
  );
}
