import type { LoaderFunctionArgs } from 'react-router-dom';
import { requireArea } from '@/features/auth/lib/require-role';
import { EmptyState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('review', request);
  return null;
}

/** Placeholder until story review lands. */
export function Component() {
  return (
    <>
      <PageHeader
        title="Review queue"
        description="Stories waiting for a moderator to check their readings against the footage."
      />
      <EmptyState title="Not built yet: the review queue arrives with story submission">
        This page is a placeholder. Once builders can submit stories, each one waits here until you have checked or
        flagged its readings. There is nothing for you to do on it yet.
      </EmptyState>
    </>
  );
}
