import { useState } from 'react';
import type { Build } from '@shared/builds/build.schema';
import { Button, ButtonLink } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { useToast } from '@/components/ui/toast';
import { useUpdateBuild } from '../api/build-mutations';
import { BuildForm } from './build-form';

/** The build's title, subject and parts with serials, editable in a dialog with the same form as a new build. */
export function BuildHeader({ build }: { build: Build }) {
  const [editing, setEditing] = useState(false);
  const update = useUpdateBuild(build.id);
  const { toast } = useToast();

  return (
    <header className="mb-5 flex flex-col gap-3 border-b border-rule pb-4">
      <title>{`${build.title} · Benchproof`}</title>
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div className="min-w-0">
          <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">Build workspace</p>
          <h1 className="text-xl font-semibold tracking-tight">{build.title}</h1>
          {build.subject ? (
            <p className="mt-0.5 max-w-prose text-sm text-ink">{build.subject}</p>
          ) : (
            <p className="mt-0.5 text-sm text-ink-muted">Not said yet what is being built. Add it with “Edit build”.</p>
          )}
        </div>
        <div className="flex flex-wrap items-center gap-2" data-print="hide">
          <ButtonLink to={`/builds/${build.id}/stories`} size="sm">
            Stories
          </ButtonLink>
          <Button size="sm" onClick={() => setEditing(true)}>
            Edit build
          </Button>
        </div>
      </div>

      <div>
        <h2 className="sr-only">Parts</h2>
        {build.parts.length === 0 ? (
          <p className="text-sm text-ink-muted">No parts listed. Add them with “Edit build” so readings can name the part they were taken on.</p>
        ) : (
          <dl className="flex flex-wrap gap-1.5" aria-label="Parts and serial numbers">
            {build.parts.map((part) => (
              <div key={part.id} className="flex items-baseline gap-1.5 rounded-sm border border-rule bg-paper-2/60 px-2 py-0.5 text-sm">
                <dt>{part.name}</dt>
                <dd className="figures text-xs text-ink-muted">
                  {part.serial ? (
                    <>
                      <span className="sr-only">serial </span>
                      {part.serial}
                    </>
                  ) : (
                    'no serial'
                  )}
                </dd>
              </div>
            ))}
          </dl>
        )}
      </div>

      <Dialog open={editing} onOpenChange={setEditing}>
        <DialogContent title="Edit build" description="Title, what is being built, and the parts with their serial numbers.">
          <BuildForm
            defaultValues={{
              title: build.title,
              subject: build.subject,
              parts: build.parts.map(({ id, name, serial }) => ({ id, name, serial })),
            }}
            submitLabel="Save changes"
            pendingLabel="Saving…"
            secondaryAction={
              <DialogClose asChild>
                <Button variant="quiet">Cancel</Button>
              </DialogClose>
            }
            onSubmit={async (values) => {
              await update.mutateAsync(values);
              setEditing(false);
              toast({ tone: 'success', title: 'Build saved' });
            }}
          />
        </DialogContent>
      </Dialog>
    </header>
  );
}
