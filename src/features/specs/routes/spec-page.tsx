import { useState } from 'react';
import { useQuery, useSuspenseQuery } from '@tanstack/react-query';
import { data, useParams, type LoaderFunctionArgs } from 'react-router-dom';
import { specIdParamsSchema } from '@shared/specs/spec-library.schema';
import { authQueries } from '@/features/auth/api/auth-queries';
import { requireArea } from '@/features/auth/lib/require-role';
import { Badge } from '@/components/ui/badge';
import { Button, ButtonLink } from '@/components/ui/button';
import { Panel } from '@/components/ui/panel';
import { useToast } from '@/components/ui/toast';
import { ApiError } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { useAddSpecVersion } from '../api/spec-mutations';
import { specQueries } from '../api/spec-queries';
import { SpecCaution } from '../components/spec-caution';
import { SpecDetailsDialog } from '../components/spec-details-dialog';
import { SpecVersionForm } from '../components/spec-forms';
import { SpecVersionCard } from '../components/spec-version-card';
import { figuresFrom } from '../lib/spec-form';

function specIdFrom(params: unknown): number {
  const parsed = specIdParamsSchema.safeParse(params);
  if (!parsed.success) throw data(null, { status: 404 });
  return parsed.data.specId;
}

export async function loader({ request, params }: LoaderFunctionArgs) {
  await requireArea('specs', request);
  const specId = specIdFrom(params);
  try {
    await queryClient.ensureQueryData(specQueries.detail(specId));
  } catch (error) {
    // Not yours and not shared answers 404 too: the same page as a spec that does not exist.
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
    throw error;
  }
  return null;
}

/** One spec: every version newest first with its band drawn; the owner edits details and adds versions. */
export function Component() {
  const specId = specIdFrom(useParams());
  const { data: spec } = useSuspenseQuery(specQueries.detail(specId));
  const me = useQuery(authQueries.me());
  const isOwner = me.data?.id === spec.ownerId && me.data.role === 'builder';
  const [editing, setEditing] = useState(false);
  const [addingVersion, setAddingVersion] = useState(false);
  const addVersion = useAddSpecVersion(specId);
  const { toast } = useToast();
  const versions = spec.versions ?? [spec.latest];
  const nextNumber = Math.max(...versions.map((v) => v.version)) + 1;

  return (
    <>
      <p className="mb-2 text-sm" data-print="hide">
        <ButtonLink to="/specs" variant="quiet" size="sm" className="-ml-2.5">
          ← Spec library
        </ButtonLink>
      </p>
      <header className="mb-4 flex flex-col gap-3 border-b border-rule pb-4">
        <title>{`${spec.name} · Spec library · Benchproof`}</title>
        <div className="flex flex-wrap items-start justify-between gap-3">
          <div className="min-w-0">
            <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">Spec library</p>
            <h1 className="text-xl font-semibold tracking-tight">{spec.name}</h1>
            <p className="mt-0.5 text-sm">
              {spec.appliesTo ? <>Applies to {spec.appliesTo}</> : <span className="text-ink-muted">Not said what it applies to.</span>}
            </p>
            <p className="mt-1 flex flex-wrap items-center gap-2 text-sm text-ink-muted">
              <span>Kept by {isOwner ? 'you' : spec.ownerName}</span>
              <Badge>{spec.shared ? 'shared in the library' : 'not shared'}</Badge>
              <span>
                {versions.length} {versions.length === 1 ? 'version' : 'versions'}
              </span>
            </p>
          </div>
          {isOwner && (
            <div className="flex flex-wrap gap-2" data-print="hide">
              <Button size="sm" onClick={() => setEditing(true)}>
                Edit details
              </Button>
              <Button size="sm" variant="primary" onClick={() => setAddingVersion(true)} disabled={addingVersion}>
                New version
              </Button>
            </div>
          )}
        </div>
      </header>
      <SpecCaution className="mb-5" />

      {addingVersion && (
        <Panel
          title={`New version (${nextNumber})`}
          description="Prefilled from the latest version. Saved as a new version; earlier versions and the verdicts judged against them stay as they are."
          className="mb-6"
        >
          <SpecVersionForm
            defaultValues={figuresFrom(spec.latest)}
            nextNumber={nextNumber}
            secondaryAction={
              <Button variant="quiet" onClick={() => setAddingVersion(false)}>
                Cancel
              </Button>
            }
            onSubmit={async (values) => {
              const version = await addVersion.mutateAsync(values);
              setAddingVersion(false);
              toast({ tone: 'success', title: `Version ${version.version} saved`, description: spec.name });
            }}
          />
        </Panel>
      )}

      <section aria-labelledby="versions-heading">
        <h2 id="versions-heading" className="mb-3 text-lg font-semibold">
          Versions, newest first
        </h2>
        <ol className="flex flex-col gap-4">
          {versions.map((version) => (
            <li key={version.id}>
              <SpecVersionCard version={version} latest={version.id === spec.latest.id} />
            </li>
          ))}
        </ol>
      </section>

      {editing && <SpecDetailsDialog spec={spec} onClose={() => setEditing(false)} />}
    </>
  );
}
