import type { LoaderFunctionArgs } from 'react-router-dom';
import { requireArea } from '@/features/auth/lib/require-role';
import { ButtonLink } from '@/components/ui/button';
import { EmptyState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('builds', request);
  return null;
}

/** Placeholder until the build workspace lands. */
export function Component() {
  return (
    <>
      <PageHeader title="My builds" description="Your builds, their clips, readings, parts and instruments." />
      <EmptyState
        title="Not built yet: the build workspace arrives with clip uploads"
        action={
          <ButtonLink to="/calculator" variant="secondary">
            Open the clearance calculator
          </ButtonLink>
        }
      >
        This page is a placeholder. Once clip uploads exist you will start a build here, add clips, and mark the
        moments your readings were taken. Until then, the calculator works without a build.
      </EmptyState>
    </>
  );
}
