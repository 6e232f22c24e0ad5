import { useQuery } from '@tanstack/react-query';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { answerInputSchema, type EvidenceCheckDto } from '@shared/review/review.schema';
import type { ReviewSheet } from '@shared/review/review-sheet.schema';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Textarea } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { authQueries } from '@/features/auth/api/auth-queries';
import { formatTime } from '@/features/clips/lib/clip-format';
import { enteredFigures, estimateText } from '@/features/readings/lib/reading-text';
import { ApiError, errorMessage } from '@/lib/api';
import { useAnswerCheck } from '../api/review-mutations';
import { reviewQueries } from '../api/review-queries';
import { clockTime, exactTime, relativeTime } from '../lib/review-format';
import { EvidenceStateGlyph } from './evidence-state-badge';

/**
 * The flags that stand on a story: for each reading or clearance whose latest check is a flag,
 * the moderator's comment, the figures flagged, the answers so far and (for the builder) a box
 * to answer. Reads the review sheet, `GET /api/review/stories/:storyId`.
 */
export function FlagsToAnswer({ storyId }: { storyId: number }) {
  const sheet = useQuery(reviewQueries.sheet(storyId));
  const me = useQuery(authQueries.me());

  if (sheet.isPending) return <LoadingState label="Loading the moderator’s flags…" />;
  if (!sheet.data) {
    return (
      <ErrorState
        title="The flags on this story could not be loaded"
        error={sheet.error}
        onRetry={() => void sheet.refetch()}
        retrying={sheet.isRefetching}
      />
    );
  }
  const flags = standingFlags(sheet.data.checks);
  if (flags.length === 0) {
    return (
      <EmptyState title="No flags to answer">
        {sheet.data.story.state === 'in-review'
          ? 'A moderator is checking the readings; anything they flag appears here with their comment.'
          : 'No moderator has flagged a reading or clearance of this story. If one does, it appears here with their comment.'}
      </EmptyState>
    );
  }
  const isBuilder = me.data?.id === sheet.data.story.builderId;
  return (
    <ol className="flex flex-col gap-3" aria-label="Flags to answer">
      {flags.map((flag) => (
        <li key={flag.id}>
          <FlagCard flag={flag} sheet={sheet.data} canAnswer={isBuilder} />
        </li>
      ))}
    </ol>
  );
}

/** The latest check of each subject, kept when it is a flag (a later "checked" clears an earlier flag). */
export function standingFlags(checks: readonly EvidenceCheckDto[]): EvidenceCheckDto[] {
  const latest = new Map<string, EvidenceCheckDto>();
  // Newest first from the server; the first seen per subject is its latest.
  for (const c of checks) {
    const key = `${c.subjectType}:${c.subjectId}`;
    if (!latest.has(key)) latest.set(key, c);
  }
  return [...latest.values()].filter((c) => c.state === 'flagged');
}

function FlagCard({ flag, sheet, canAnswer }: { flag: EvidenceCheckDto; sheet: ReviewSheet; canAnswer: boolean }) {
  const reading = flag.subjectType === 'reading' ? sheet.readings.find((r) => r.reading.id === flag.subjectId)?.reading : undefined;
  const clearance = flag.subjectType === 'clearance' ? sheet.clearances.find((c) => c.clearance.id === flag.subjectId)?.clearance : undefined;
  return (
    <article className="rounded-md border border-danger/40 bg-paper p-3" data-flag={`${flag.subjectType}:${flag.subjectKey}`}>
      <header className="flex flex-wrap items-baseline gap-x-2 gap-y-1">
        <EvidenceStateGlyph state="flagged" className="self-center text-danger" />
        <h3 className="text-sm font-semibold">
          <span className="sr-only">Flagged {flag.subjectType}: </span>
          {flag.subjectName}
        </h3>
        <span className="figures text-xs text-ink-muted">{flag.subjectKey}</span>
        {!flag.current && (
          <span className="text-xs text-verdict-undecided">changed since it was flagged: a moderator will check it again</span>
        )}
      </header>
      <blockquote className="mt-2 border-l-2 border-danger/60 pl-3 text-sm">
        <p>{flag.comment}</p>
        <footer className="mt-0.5 text-xs text-ink-muted">
          {flag.moderatorName}, <time dateTime={flag.createdAt} title={exactTime(flag.createdAt)}>{relativeTime(flag.createdAt)}</time>
        </footer>
      </blockquote>
      {reading && (
        <figure className="mt-2">
          <img
            src={reading.frameUrl}
            alt={`The still the flag refers to: ${reading.clipTitle} at ${formatTime(reading.atMs / 1000)}`}
            className="w-full max-w-72 rounded-sm border border-rule bg-paper-2"
            loading="lazy"
          />
          <figcaption className="figures mt-0.5 text-xs text-ink-muted">
            {reading.clipTitle} at {formatTime(reading.atMs / 1000)}
          </figcaption>
        </figure>
      )}
      {reading && (
        <p className="mt-2 text-xs text-ink-muted">
          Logged: <span className="figures text-ink">{enteredFigures(reading)}</span> → <span className="figures text-ink">{estimateText(reading)}</span>, with{' '}
          {reading.instrumentName}, {reading.clipTitle}
        </p>
      )}
      {clearance && (
        <p className="mt-2 text-xs text-ink-muted">
          Worked out: <span className="figures text-ink">{clearance.result?.display ?? 'cannot be worked out'}</span>
        </p>
      )}
      {flag.answers.length > 0 && (
        <ol className="mt-3 flex flex-col gap-2" aria-label={`Answers to the flag on ${flag.subjectName}`}>
          {flag.answers.map((a) => (
            <li key={a.id} className="rounded-sm bg-paper-2 px-3 py-2 text-sm">
              <p className="whitespace-pre-line">{a.body}</p>
              <p className="mt-0.5 text-xs text-ink-muted">
                {a.authorName}, <time dateTime={a.createdAt} title={exactTime(a.createdAt)}>{clockTime(a.createdAt)} · {relativeTime(a.createdAt)}</time>
              </p>
            </li>
          ))}
        </ol>
      )}
      {canAnswer ? (
        <AnswerForm checkId={flag.id} subjectName={flag.subjectName} />
      ) : (
        <p className="mt-2 text-xs text-ink-muted">Only the builder answers a flag.</p>
      )}
    </article>
  );
}

type AnswerForm = z.input<typeof answerInputSchema>;

export function AnswerForm({ checkId, subjectName }: { checkId: number; subjectName: string }) {
  const { toast } = useToast();
  const answer = useAnswerCheck();
  const form = useForm<AnswerForm>({ resolver: zodResolver(answerInputSchema), defaultValues: { body: '' } });
  const { register, handleSubmit, setError, reset, formState } = form;
  const submit = handleSubmit(async ({ body }) => {
    try {
      await answer.mutateAsync({ checkId, body });
      reset({ body: '' });
      toast({ tone: 'success', title: 'Answer sent', description: 'The moderator sees it with the flag.' });
    } catch (error) {
      const detail = error instanceof ApiError ? error.details.find((d) => d.path === 'body') : undefined;
      setError('body', { message: detail?.message ?? errorMessage(error) });
    }
  });
  return (
    <form noValidate onSubmit={submit} className="mt-3 flex flex-col gap-2">
      <Field
        label={
          <>
            Your answer<span className="sr-only"> to the flag on {subjectName}</span>
          </>
        }
        hint="Say what you changed or why the figure stands, e.g. “Re-filmed the bracket at 0:14: the 0.004 in blade is the one in the still now.”"
        error={formState.errors.body?.message}
      >
        <Textarea {...register('body')} rows={3} />
      </Field>
      <div>
        <Button type="submit" size="sm" loading={answer.isPending} loadingText="Sending…">
          Send answer
        </Button>
      </div>
    </form>
  );
}
