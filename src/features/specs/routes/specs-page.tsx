import { useEffect, useState } from 'react';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import { useNavigate, useSearchParams, type LoaderFunctionArgs } from 'react-router-dom';
import { authQueries } from '@/features/auth/api/auth-queries';
import { requireArea } from '@/features/auth/lib/require-role';
import { useDefaultUnits } from '@/features/auth/lib/use-default-units';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { Field, Input } from '@/components/ui/field';
import { LoadMore } from '@/components/ui/load-more';
import { PageHeader } from '@/components/ui/page-header';
import { useToast } from '@/components/ui/toast';
import { cn } from '@/lib/cn';
import { queryClient } from '@/lib/query-client';
import { useCreateSpec } from '../api/spec-mutations';
import { specQueries, type SpecListFilter } from '../api/spec-queries';
import { SpecCaution } from '../components/spec-caution';
import { SpecCreateForm } from '../components/spec-forms';
import { SpecsTable } from '../components/specs-table';
import { blankSpecFor } from '../lib/spec-form';

function filterFrom(params: URLSearchParams): Required<SpecListFilter> {
  return { q: (params.get('q') ?? '').slice(0, 100), mine: params.get('mine') === '1' };
}

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('specs', request);
  await queryClient.prefetchInfiniteQuery(specQueries.list(filterFrom(new URL(request.url).searchParams)));
  return null;
}

const SEARCH_DELAY_MS = 300;

/** The spec library: search, own or everyone's shared, and a new spec for builders. */
export function Component() {
  const [params, setParams] = useSearchParams();
  const filter = filterFrom(params);
  const me = useQuery(authQueries.me());
  const isBuilder = me.data?.role === 'builder';
  const [creating, setCreating] = useState(false);
  const [text, setText] = useState(filter.q);

  // Type freely; the list follows a moment after the typing stops, and the address keeps the search.
  useEffect(() => {
    if (text.trim() === filter.q.trim()) return;
    const timer = window.setTimeout(() => {
      setParams(
        (current) => {
          const next = new URLSearchParams(current);
          if (text.trim()) next.set('q', text.trim());
          else next.delete('q');
          return next;
        },
        { replace: true },
      );
    }, SEARCH_DELAY_MS);
    return () => window.clearTimeout(timer);
  }, [text, filter.q, setParams]);

  function setMine(mine: boolean) {
    setParams(
      (current) => {
        const next = new URLSearchParams(current);
        if (mine) next.set('mine', '1');
        else next.delete('mine');
        return next;
      },
      { replace: true },
    );
  }

  return (
    <>
      <PageHeader
        title="Spec library"
        description={
          isBuilder
            ? 'Your specs and the ones other builders share: bands, preferred bands and reject limits, each with its source. A clearance is judged against one version of a spec.'
            : 'Every spec in the library, shared or not: the figures builders judge their clearances against, each with its source.'
        }
        actions={
          isBuilder && (
            <Button variant="primary" onClick={() => setCreating(true)}>
              New spec
            </Button>
          )
        }
      />
      <SpecCaution className="mb-4" />
      <form role="search" className="mb-4 flex flex-wrap items-end gap-4" data-print="hide" onSubmit={(event) => event.preventDefault()}>
        <Field label="Search specs" hint="By name or what it applies to." className="w-full max-w-sm">
          <Input type="search" value={text} onChange={(event) => setText(event.target.value)} autoComplete="off" maxLength={100} />
        </Field>
        {isBuilder && (
          <fieldset className="flex flex-col gap-1">
            <legend className="text-sm font-medium">Show</legend>
            <div className="flex rounded-md border border-line p-0.5">
              {[
                { value: false, label: 'Mine and everyone’s shared' },
                { value: true, label: 'Mine only' },
              ].map((option) => (
                <label
                  key={String(option.value)}
                  className={cn(
                    'cursor-pointer rounded-sm px-3 py-1.5 text-sm has-[:focus-visible]:outline-2 has-[:focus-visible]:outline-accent',
                    filter.mine === option.value ? 'bg-ink text-paper' : 'text-ink hover:bg-paper-2',
                  )}
                >
                  <input type="radio" name="mine" className="sr-only" checked={filter.mine === option.value} onChange={() => setMine(option.value)} />
                  {option.label}
                </label>
              ))}
            </div>
          </fieldset>
        )}
      </form>
      <SpecsList filter={filter} myId={me.data?.id ?? null} isBuilder={isBuilder} onCreate={() => setCreating(true)} onClear={() => setText('')} />
      {isBuilder && <CreateSpecDialog open={creating} onOpenChange={setCreating} />}
    </>
  );
}

function SpecsList({
  filter,
  myId,
  isBuilder,
  onCreate,
  onClear,
}: {
  filter: Required<SpecListFilter>;
  myId: number | null;
  isBuilder: boolean;
  onCreate: () => void;
  onClear: () => void;
}) {
  const list = useInfiniteQuery(specQueries.list(filter));
  if (list.isPending) return <LoadingState label="Loading the spec library…" />;
  if (!list.data) {
    return <ErrorState title="The spec library could not be loaded" error={list.error} onRetry={() => void list.refetch()} retrying={list.isRefetching} />;
  }
  const items = list.data.pages.flatMap((page) => page.items);
  if (items.length === 0) {
    if (filter.q) {
      return (
        <EmptyState title={`No spec matches “${filter.q}”`} action={<Button onClick={onClear}>Clear the search</Button>}>
          The search looks in names and in what a spec applies to. Try a shorter word, e.g. the part (“end float”) or the engine.
        </EmptyState>
      );
    }
    return (
      <EmptyState
        title={filter.mine ? 'You have no specs yet' : 'The library is empty'}
        action={
          isBuilder && (
            <Button variant="primary" onClick={onCreate}>
              Create a spec
            </Button>
          )
        }
      >
        {isBuilder
          ? 'Add the figures you judge clearances against, with the manual section or standard they come from. Share a spec to let other builders use it.'
          : 'No builder has added a spec yet.'}
      </EmptyState>
    );
  }
  return (
    <div className="flex flex-col gap-3">
      <SpecsTable specs={items} myId={myId} />
      <LoadMore query={list} shown={items.length} what="specs" />
    </div>
  );
}

function CreateSpecDialog({ open, onOpenChange }: { open: boolean; onOpenChange: (open: boolean) => void }) {
  const create = useCreateSpec();
  const defaults = useDefaultUnits();
  const navigate = useNavigate();
  const { toast } = useToast();
  return (
    <Dialog open={open} onOpenChange={onOpenChange}>
      <DialogContent title="New spec" description="Its figures become version 1. Later changes are saved as new versions; versions are never edited.">
        <SpecCreateForm
          defaultValues={blankSpecFor(defaults)}
          secondaryAction={
            <DialogClose asChild>
              <Button variant="quiet">Cancel</Button>
            </DialogClose>
          }
          onSubmit={async (values) => {
            const spec = await create.mutateAsync(values);
            onOpenChange(false);
            toast({ tone: 'success', title: 'Spec created', description: `${spec.name}, version 1.` });
            navigate(`/specs/${spec.id}`);
          }}
        />
      </DialogContent>
    </Dialog>
  );
}
