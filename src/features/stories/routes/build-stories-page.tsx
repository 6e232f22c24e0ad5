import { useState } from 'react';
import { useInfiniteQuery, useSuspenseQuery } from '@tanstack/react-query';
import { data, Link, useParams, type LoaderFunctionArgs } from 'react-router-dom';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import { storyStateWords, type Story } from '@shared/stories/story.schema';
import { Badge } from '@/components/ui/badge';
import { Button, ButtonLink } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { PageHeader } from '@/components/ui/page-header';
import { Table, TBody, Td, Th, THead, Tr } from '@/components/ui/table';
import { buildQueries } from '@/features/builds/api/build-queries';
import { requireArea } from '@/features/auth/lib/require-role';
import { ApiError } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { storyQueries } from '../api/story-queries';
import { NewEntryDialog } from '../components/new-entry-dialog';
import { savedTime } from '../components/save-status';
import { dayText } from '@/lib/dates';

function buildIdFrom(params: unknown): number {
  const parsed = buildIdParamsSchema.safeParse(params);
  if (!parsed.success) throw data(null, { status: 404 });
  return parsed.data.buildId;
}

export async function loader({ request, params }: LoaderFunctionArgs) {
  await requireArea('builds', request);
  const buildId = buildIdFrom(params);
  void queryClient.prefetchInfiniteQuery(storyQueries.list(buildId));
  try {
    await queryClient.ensureQueryData(buildQueries.detail(buildId));
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
    throw error;
  }
  return null;
}

type Entry = Omit<Story, 'body'>;

/** Work date first (the order of the work); undated entries after, newest first. */
function byWorkDate(a: Entry, b: Entry): number {
  if (a.workDate && b.workDate && a.workDate !== b.workDate) return a.workDate < b.workDate ? -1 : 1;
  if (a.workDate && !b.workDate) return -1;
  if (!a.workDate && b.workDate) return 1;
  return a.createdAt < b.createdAt ? -1 : a.createdAt > b.createdAt ? 1 : a.id - b.id;
}


/** /builds/:buildId/stories — the build's stories in the order of the work. */
export function Component() {
  const buildId = buildIdFrom(useParams());
  const { data: build } = useSuspenseQuery(buildQueries.detail(buildId));
  const list = useInfiniteQuery(storyQueries.list(buildId));
  const [creating, setCreating] = useState(false);
  const entries = (list.data?.pages.flatMap((page) => page.items) ?? []).slice().sort(byWorkDate);

  let body;
  if (list.isPending) body = <LoadingState label="Loading the stories…" />;
  else if (list.isError && !list.data)
    body = <ErrorState title="The stories could not be loaded" error={list.error} onRetry={() => void list.refetch()} retrying={list.isRefetching} />;
  else if (entries.length === 0)
    body = (
      <EmptyState
        title="No stories yet"
        action={
          <Button variant="primary" onClick={() => setCreating(true)}>
            New story
          </Button>
        }
      >
        Write up each session at the bench: what you did, what you measured, and claims that link each figure to its reading or clearance. Stories
        stay drafts until you send them for review.
      </EmptyState>
    );
  else
    body = (
      <div className="flex flex-col gap-3">
        <Table caption="Stories in order of work date" captionHidden maxHeight="none">
          <THead>
            <Tr>
              <Th>Work date</Th>
              <Th>Title</Th>
              <Th>State</Th>
              <Th numeric>Words</Th>
              <Th>Last saved</Th>
            </Tr>
          </THead>
          <TBody>
            {entries.map((entry) => (
              <Tr key={entry.id}>
                <Td mono className="whitespace-nowrap">
                  {entry.workDate ? <time dateTime={entry.workDate}>{dayText(entry.workDate)}</time> : <span className="text-ink-muted">no date</span>}
                </Td>
                <Td>
                  <Link to={`/stories/${entry.id}/edit`} className="font-medium">
                    {entry.title}
                  </Link>
                  {entry.summary && <p className="line-clamp-1 text-xs text-ink-muted">{entry.summary}</p>}
                </Td>
                <Td>
                  <Badge tone={entry.state === 'published' ? 'strong' : 'neutral'}>{storyStateWords[entry.state]}</Badge>
                </Td>
                <Td numeric>{entry.wordCount}</Td>
                <Td className="whitespace-nowrap text-ink-muted">
                  <time dateTime={entry.updatedAt}>{savedTime(entry.updatedAt)}</time>
                </Td>
              </Tr>
            ))}
          </TBody>
        </Table>
        <LoadMore query={list} shown={entries.length} what="stories" />
      </div>
    );

  return (
    <>
      <p className="mb-2 text-sm" data-print="hide">
        <ButtonLink to={`/builds/${buildId}`} variant="quiet" size="sm" className="-ml-2.5">
          ← {build.title}
        </ButtonLink>
      </p>
      <PageHeader
        eyebrow={build.title}
        title="Stories"
        documentTitle={`Stories · ${build.title}`}
        description="The build’s stories in the order the work was done. Open one to write; it saves as you type."
        actions={
          entries.length > 0 && (
            <Button variant="primary" onClick={() => setCreating(true)}>
              New story
            </Button>
          )
        }
      />
      {body}
      <NewEntryDialog buildId={buildId} open={creating} onOpenChange={setCreating} />
    </>
  );
}
