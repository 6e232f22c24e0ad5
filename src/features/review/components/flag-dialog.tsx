import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { checkInputSchema } from '@shared/review/review.schema';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { Field, Textarea } from '@/components/ui/field';
import { ApiError, errorMessage } from '@/lib/api';
import type { CheckInput } from '../api/review-mutations';

export interface FlagDialogProps {
  storyId: number;
  subject: { type: 'reading' | 'clearance'; id: number; name: string };
  pending: boolean;
  onCancel: () => void;
  /** Resolves when recorded; a refusal is shown in the dialog. */
  onSubmit: (input: CheckInput) => Promise<unknown>;
}

const examples = {
  reading: ['the blade shown is not the one logged', 'the dial is not readable at this moment', 'the micrometer is not on the part named'],
  clearance: ['a reading it sums is flagged', 'the spec attached is for another model'],
};

/** Asks what is wrong before a flag is recorded: the comment is required and goes to the builder. */
export function FlagDialog({ storyId, subject, pending, onCancel, onSubmit }: FlagDialogProps) {
  const form = useForm<CheckInput>({
    resolver: zodResolver(checkInputSchema),
    defaultValues: { storyId, subjectType: subject.type, subjectId: subject.id, state: 'flagged', comment: '' },
  });
  const { register, handleSubmit, setError, formState } = form;
  const submit = handleSubmit(async (values) => {
    try {
      await onSubmit(values);
    } catch (error) {
      const detail = error instanceof ApiError ? error.details.find((d) => d.path === 'comment') : undefined;
      setError(detail ? 'comment' : 'root.server', { message: detail?.message ?? errorMessage(error) });
    }
  });
  const list = examples[subject.type];
  return (
    <Dialog open onOpenChange={(open) => !open && onCancel()}>
      <DialogContent
        title={`Flag “${subject.name}”`}
        description="Say what does not hold up. The builder sees your comment and answers it; publishing waits until it is resolved."
        footer={
          <>
            <DialogClose asChild>
              <Button variant="secondary">Cancel</Button>
            </DialogClose>
            <Button variant="danger" type="submit" form="flag-form" loading={pending} loadingText="Flagging…">
              Flag it
            </Button>
          </>
        }
      >
        <form id="flag-form" noValidate onSubmit={submit} className="flex flex-col gap-2">
          <Field label="What is wrong" required hint={`For example: ${list.map((e) => `“${e}”`).join(', ')}.`} error={formState.errors.comment?.message}>
            <Textarea {...register('comment')} rows={3} autoFocus />
          </Field>
          {formState.errors.root?.server && (
            <p role="alert" className="text-sm text-danger">
              {formState.errors.root.server.message}
            </p>
          )}
        </form>
      </DialogContent>
    </Dialog>
  );
}
