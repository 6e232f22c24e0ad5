import { useState, type FormEvent, type ReactNode } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { useInfiniteQuery } from '@tanstack/react-query';
import { useLocation } from 'react-router-dom';
import type { z } from 'zod';
import { answerInputSchema, hideInputSchema, MAX_QUESTION, questionInputSchema, type Question } from '@shared/public/questions.schema';
import { Badge } from '@/components/ui/badge';
import { Button, ButtonLink } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Input, Textarea } from '@/components/ui/field';
import { LoadMore } from '@/components/ui/load-more';
import { useToast } from '@/components/ui/toast';
import { signInPath } from '@/features/auth/lib/return-to';
import { ApiError, errorMessage } from '@/lib/api';
import { questionQueries, useAnswerQuestion, useAskQuestion, useHideQuestion } from '../api/question-queries';
import { instantDay } from '@/lib/dates';

/** The server's field errors onto a one-field form; everything else as the form's own error. */
function serverErrors(error: unknown, setField: (message: string) => void, setRoot: (message: string) => void) {
  const field = error instanceof ApiError ? error.details.find((d) => d.path && /(^|\.)(body|reason)$/.test(String(d.path))) : undefined;
  if (field) setField(field.message);
  else if (error instanceof ApiError && error.status === 429) setRoot(`${error.message} You can ask again in a little while; your question is still in the box.`);
  else setRoot(errorMessage(error));
}

/**
 * Readers' questions under a story and the builder's answers: anyone reads, signed-in readers
 * ask (plain text, rate-limited), the builder answers, moderators hide. Loaded on its own.
 */
export default function QuestionsSection({ storyId, builderName }: { storyId: number; builderName: string }) {
  const questions = useInfiniteQuery(questionQueries.list(storyId));
  const items = questions.data?.pages.flatMap((p) => p.items) ?? [];
  const first = questions.data?.pages[0];

  return (
    <section aria-labelledby="questions-heading" className="mt-12 border-t border-rule pt-6" data-print="hide">
      <h2 id="questions-heading" className="text-lg font-semibold">
        Questions
      </h2>
      <p className="mt-1 text-sm text-ink-muted">Ask {builderName} about this entry. Questions are plain text; the builder answers here.</p>

      <div className="mt-4 flex flex-col gap-4">
        {questions.isPending ? (
          <LoadingState label="Loading questions…" />
        ) : questions.isError ? (
          <ErrorState title="The questions could not be loaded" error={questions.error} onRetry={() => void questions.refetch()} retrying={questions.isRefetching} />
        ) : (
          <>
            {items.length === 0 ? (
              <EmptyState title="No questions yet">
                {first?.canAsk ? 'Be the first: ask below about a figure, a tool or a step.' : 'Sign in to ask the builder about a figure, a tool or a step.'}
              </EmptyState>
            ) : (
              <ol className="flex flex-col gap-4">
                {items.map((q) => (
                  <QuestionItem key={q.id} question={q} canAnswer={Boolean(first?.canAnswer)} canModerate={Boolean(first?.canModerate)} builderName={builderName} />
                ))}
              </ol>
            )}
            {items.length > 0 && <LoadMore query={questions} shown={items.length} what="questions" />}
            {first?.canAsk ? <AskForm storyId={storyId} /> : <SignInToAsk />}
          </>
        )}
      </div>
    </section>
  );
}

function SignInToAsk() {
  const location = useLocation();
  return (
    <p className="text-sm">
      <ButtonLink to={signInPath(location.pathname)} size="sm" variant="secondary">
        Sign in to ask a question
      </ButtonLink>
    </p>
  );
}

function AskForm({ storyId }: { storyId: number }) {
  const ask = useAskQuestion(storyId);
  const { toast } = useToast();
  const form = useForm<z.input<typeof questionInputSchema>, unknown, z.output<typeof questionInputSchema>>({
    resolver: zodResolver(questionInputSchema),
    defaultValues: { body: '' },
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async ({ body }) => {
    try {
      await ask.mutateAsync(body);
      form.reset({ body: '' });
      toast({ tone: 'success', title: 'Question posted', description: 'The builder is told; their answer will appear under it.' });
    } catch (error) {
      serverErrors(
        error,
        (message) => form.setError('body', { message }),
        (message) => form.setError('root.server', { message }),
      );
    }
  });
  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3 rounded-md border border-rule p-4">
      <Field label="Your question" error={errors.body?.message} hint={`Plain text, up to ${MAX_QUESTION} characters. Be specific: which figure, which step.`}>
        <Textarea {...form.register('body')} rows={3} />
      </Field>
      {errors.root?.server && (
        <p role="alert" className="text-sm text-danger">
          {errors.root.server.message}
        </p>
      )}
      <div>
        <Button type="submit" variant="primary" loading={ask.isPending} loadingText="Posting…">
          Ask the builder
        </Button>
      </div>
    </form>
  );
}

function QuestionItem({ question, canAnswer, canModerate, builderName }: { question: Question; canAnswer: boolean; canModerate: boolean; builderName: string }) {
  const [answering, setAnswering] = useState(false);
  const [hiding, setHiding] = useState(false);
  const hide = useHideQuestion();
  const { toast } = useToast();
  return (
    <li className="rounded-md border border-rule p-4" data-question={question.id}>
      <p className="text-xs text-ink-muted">
        <span className="font-medium text-ink">{question.author.displayName}</span> asked on {instantDay(question.createdAt)}
        {question.hidden && (
          <Badge className="ml-2" tone="strong">
            Hidden{question.hiddenReason ? `: ${question.hiddenReason}` : ''}
          </Badge>
        )}
      </p>
      <p className="mt-1 whitespace-pre-line">{question.body}</p>
      {question.answer && (
        <div className="mt-3 border-l-2 border-accent pl-3">
          <p className="text-xs text-ink-muted">
            <span className="font-medium text-ink">{question.answer.by.displayName}</span> answered on {instantDay(question.answer.at)}
          </p>
          <p className="mt-1 whitespace-pre-line">{question.answer.body}</p>
        </div>
      )}
      {(canAnswer || canModerate) && (
        <div className="mt-3 flex flex-wrap gap-2">
          {canAnswer && !answering && (
            <Button size="sm" variant="secondary" onClick={() => setAnswering(true)}>
              {question.answer ? 'Change your answer' : 'Answer'}
            </Button>
          )}
          {canModerate &&
            (question.hidden ? (
              <Button
                size="sm"
                variant="quiet"
                loading={hide.isPending}
                onClick={() =>
                  hide.mutate({ questionId: question.id, hide: false }, { onError: (e) => toast({ tone: 'error', title: 'Not shown again', description: errorMessage(e) }) })
                }
              >
                Show again
              </Button>
            ) : (
              !hiding && (
                <Button size="sm" variant="quiet" onClick={() => setHiding(true)}>
                  Hide
                </Button>
              )
            ))}
        </div>
      )}
      {answering && <AnswerForm question={question} builderName={builderName} onDone={() => setAnswering(false)} />}
      {hiding && <HideForm question={question} onDone={() => setHiding(false)} />}
    </li>
  );
}

function AnswerForm({ question, builderName, onDone }: { question: Question; builderName: string; onDone: () => void }) {
  const answer = useAnswerQuestion();
  const form = useForm<z.input<typeof answerInputSchema>, unknown, z.output<typeof answerInputSchema>>({
    resolver: zodResolver(answerInputSchema),
    defaultValues: { body: question.answer?.body ?? '' },
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async ({ body }) => {
    try {
      await answer.mutateAsync({ questionId: question.id, body });
      onDone();
    } catch (error) {
      serverErrors(
        error,
        (message) => form.setError('body', { message }),
        (message) => form.setError('root.server', { message }),
      );
    }
  });
  return (
    <InlineForm onSubmit={submit} serverError={errors.root?.server?.message} submitLabel="Post the answer" pendingLabel="Saving…" pending={answer.isPending} variant="primary" onCancel={onDone}>
      <Field label={`Answer as ${builderName}`} error={errors.body?.message}>
        <Textarea {...form.register('body')} rows={3} />
      </Field>
    </InlineForm>
  );
}

function HideForm({ question, onDone }: { question: Question; onDone: () => void }) {
  const hide = useHideQuestion();
  const form = useForm<z.input<typeof hideInputSchema>, unknown, z.output<typeof hideInputSchema>>({
    resolver: zodResolver(hideInputSchema),
    defaultValues: { reason: '' },
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async ({ reason }) => {
    try {
      await hide.mutateAsync({ questionId: question.id, hide: true, reason });
      onDone();
    } catch (error) {
      serverErrors(
        error,
        (message) => form.setError('reason', { message }),
        (message) => form.setError('root.server', { message }),
      );
    }
  });
  return (
    <InlineForm onSubmit={submit} serverError={errors.root?.server?.message} submitLabel="Hide the question" pendingLabel="Hiding…" pending={hide.isPending} variant="danger" onCancel={onDone}>
      <Field label="Why hide it" hint="Shown to the builder and moderators, not to readers." error={errors.reason?.message}>
        <Input {...form.register('reason')} />
      </Field>
    </InlineForm>
  );
}

interface InlineFormProps {
  onSubmit: (event?: FormEvent) => void;
  serverError: string | undefined;
  submitLabel: string;
  pendingLabel: string;
  pending: boolean;
  variant: 'primary' | 'danger';
  onCancel: () => void;
  children: ReactNode;
}

/** The frame of the answer and hide forms under a question: its field, the server's refusal, submit and cancel. */
function InlineForm({ onSubmit, serverError, submitLabel, pendingLabel, pending, variant, onCancel, children }: InlineFormProps) {
  return (
    <form noValidate onSubmit={onSubmit} className="mt-3 flex flex-col gap-2">
      {children}
      {serverError && (
        <p role="alert" className="text-sm text-danger">
          {serverError}
        </p>
      )}
      <div className="flex gap-2">
        <Button type="submit" size="sm" variant={variant} loading={pending} loadingText={pendingLabel}>
          {submitLabel}
        </Button>
        <Button size="sm" variant="quiet" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
