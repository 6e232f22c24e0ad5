import { useForm, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { useNavigate } from 'react-router-dom';
import type { z } from 'zod';
import { storyInputSchema, type StoryInput } from '@shared/stories/story.schema';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { Field, Input } from '@/components/ui/field';
import { ApiError, errorMessage } from '@/lib/api';
import { useCreateStory } from '../api/story-mutations';

type StoryOutput = z.output<typeof storyInputSchema>;

function today(): string {
  const now = new Date();
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

/** "New entry": a title and the day of the work, then straight into the editor. */
export function NewEntryDialog({ buildId, open, onOpenChange }: { buildId: number; open: boolean; onOpenChange: (open: boolean) => void }) {
  const create = useCreateStory(buildId);
  const navigate = useNavigate();
  const form = useForm<StoryInput, unknown, StoryOutput>({
    resolver: zodResolver(storyInputSchema),
    defaultValues: { title: '', workDate: today() },
    mode: 'onTouched',
  });
  const { register, handleSubmit, setError, formState } = form;
  const errors = formState.errors;

  const submit = handleSubmit(async (values) => {
    try {
      const story = await create.mutateAsync(values);
      onOpenChange(false);
      await navigate(`/stories/${story.id}/edit`);
    } catch (error) {
      const fieldErrors = error instanceof ApiError ? error.details.filter((d) => d.path) : [];
      for (const detail of fieldErrors) setError(detail.path as Path<StoryInput>, { message: detail.message });
      setError('root.server', { message: errorMessage(error) });
    }
  });

  return (
    <Dialog
      open={open}
      onOpenChange={(next) => {
        if (next) form.reset({ title: '', workDate: today() });
        onOpenChange(next);
      }}
    >
      <DialogContent title="New story" description="Name the session; the rest is written in the editor, which saves as you type.">
        <form noValidate onSubmit={submit} className="flex flex-col gap-4">
          <Field label="Title" required error={errors.title?.message} hint="e.g. “Oil pump: rotors lapped, end float remeasured”">
            <Input {...register('title')} autoComplete="off" autoFocus />
          </Field>
          <Field label="Work date" error={errors.workDate?.message} hint="The day of the bench work.">
            <Input type="date" {...register('workDate', { setValueAs: (v: string) => (v === '' ? null : v) })} />
          </Field>
          {errors.root?.server?.message && (
            <p role="alert" className="text-sm text-danger">
              Not created: {errors.root.server.message}
            </p>
          )}
          <div className="flex flex-wrap justify-end gap-2">
            <DialogClose asChild>
              <Button variant="quiet">Cancel</Button>
            </DialogClose>
            <Button type="submit" variant="primary" loading={formState.isSubmitting} loadingText="Creating…">
              Create and open the editor
            </Button>
          </div>
        </form>
      </DialogContent>
    </Dialog>
  );
}
