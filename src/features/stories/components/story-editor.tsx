import { useCallback, useDeferredValue, useEffect, useMemo, useRef, useState, type KeyboardEvent, type ReactNode } from 'react';
import { useQuery, useQueryClient } from '@tanstack/react-query';
import { Controller, useForm, useWatch, type FieldError, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { useBlocker } from 'react-router-dom';
import type { ErrorDetail } from '@shared/http/error.schema';
import { claimBlockers } from '@shared/review/claim-problems';
import { actionsFor } from '@shared/review/workflow';
import { claimTargetsFrom } from '@shared/stories/claims';
import { renderStory } from '@shared/stories/render';
import { storyStateWords, storyTagGroups, type Story, type StoryTags } from '@shared/stories/story.schema';
import { Badge } from '@/components/ui/badge';
import { Button, ButtonLink } from '@/components/ui/button';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { ConfirmDialog } from '@/components/ui/dialog';
import { Field, Input, Textarea } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { useMediaQuery } from '@/lib/use-media-query';
import { evidenceQueries } from '../api/evidence-queries';
import { fetchStoredStory, useKeepRevision } from '../api/story-mutations';
import { storyQueries } from '../api/story-queries';
import { clearLocalDraft, readLocalDraft, type LocalDraft } from '../lib/local-draft';
import { hasShortcutModifier, shortcutLabel } from '../lib/platform';
import { changedFields, fieldsOf, fieldWords, storyFieldNames, storyFieldsSchema, type StoryFields, type StoryFieldsInput } from '../lib/story-fields';
import { insertClaim } from '../lib/markdown-edit';
import { applyEdit, revealRange } from '../lib/textarea';
import { useStoryAutosave } from '../lib/use-story-autosave';
import { BodyEditor } from './body-editor';
import { ClaimPicker, pickableTargets, type PickableTarget } from './claim-picker';
import { FlagsToAnswer } from '@/features/review/components/flags-to-answer';
import { GateClosed, StoryWorkflowBar } from '@/features/review/components/story-workflow-bar';
import { ClaimsPanel } from './claims-panel';
import { CoverPicker, useBuildMoments } from './cover-picker';
import { ChangesRequestedNotice, ConflictNotice, RestoreOffer } from './editor-notices';
import { RevisionPanel } from './revision-panel';
import { SaveStatus } from './save-status';
import { StoryPreview, type PreviewContent } from './story-preview';
import { TagInput } from './tag-input';

const tagFields: Record<(typeof storyTagGroups)[number], { label: string; hint: string }> = {
  machine: { label: 'Machine family', hint: 'e.g. Vellum 1100, flat twin' },
  component: { label: 'Component', hint: 'e.g. oil pump, crankshaft' },
  operation: { label: 'Operation', hint: 'e.g. lapping, end float check' },
};

type PreviewMode = { kind: 'live' } | { kind: 'revision'; number: number } | { kind: 'other'; story: Story };

/** The first message in a field's errors (a tag group's errors may sit on one tag). */
function firstMessage(error: unknown): string | undefined {
  if (!error || typeof error !== 'object') return undefined;
  const e = error as Partial<FieldError> & Record<string, unknown>;
  if (typeof e.message === 'string' && e.message) return e.message;
  for (const value of Object.values(e)) {
    const found = value && typeof value === 'object' && value !== e.ref ? firstMessage(value) : undefined;
    if (found) return found;
  }
  return undefined;
}

/**
 * The diary entry editor: the fields and the Markdown text on one side, the entry as readers will
 * see it on the other (a tab on narrow screens), claims checked as you type, autosave with an
 * optimistic lock, a copy on this device, and the revision history.
 */
export function StoryEditor({ story }: { story: Story }) {
  const storyId = story.id;
  const buildId = story.buildId;
  const queryClient = useQueryClient();
  const { toast } = useToast();
  const wide = useMediaQuery('(min-width: 64rem)');
  const [tab, setTab] = useState<'write' | 'preview'>('write');
  const [mode, setMode] = useState<PreviewMode>({ kind: 'live' });
  const [pickerOpen, setPickerOpen] = useState(false);
  const [pickerSelection, setPickerSelection] = useState('');
  const [conflictBusy, setConflictBusy] = useState<'loading' | 'saving' | null>(null);
  const [conflictError, setConflictError] = useState<unknown>(null);
  const [confirmTakeOther, setConfirmTakeOther] = useState(false);
  const [confirmRestore, setConfirmRestore] = useState<number | null>(null);
  const [keepError, setKeepError] = useState<unknown>(null);
  const [offer, setOffer] = useState<LocalDraft | null>(() => {
    const draft = readLocalDraft(storyId);
    if (!draft) return null;
    if (changedFields(draft.values, fieldsOf(story)).length === 0) {
      clearLocalDraft(storyId);
      return null;
    }
    return draft;
  });
  const textareaRef = useRef<HTMLTextAreaElement | null>(null);
  const shortcut = shortcutLabel('K');

  const form = useForm<StoryFieldsInput, unknown, StoryFields>({
    resolver: zodResolver(storyFieldsSchema),
    defaultValues: fieldsOf(story),
    mode: 'onChange',
  });
  const { register, control, formState, setError, clearErrors, getValues, setValue, reset } = form;
  const errors = formState.errors;
  const values = useWatch({ control }) as StoryFieldsInput;
  const body = values.body ?? '';
  const deferredBody = useDeferredValue(body);

  const onInvalid = useCallback(
    (details: ErrorDetail[]) => {
      for (const detail of details) {
        if (!detail.path) continue;
        const field = detail.path.split('.')[0];
        if (field && (storyFieldNames as readonly string[]).includes(field)) {
          setError(detail.path as Path<StoryFieldsInput>, { type: 'server', message: detail.message });
        }
      }
    },
    [setError],
  );
  const onSaved = useCallback(
    (saved: Story) => {
      queryClient.setQueryData(storyQueries.detail(saved.id).queryKey, saved);
      void queryClient.invalidateQueries({ queryKey: storyQueries.list(buildId).queryKey });
      void queryClient.invalidateQueries({ queryKey: storyQueries.revisions(saved.id).queryKey });
    },
    [buildId, queryClient],
  );
  const autosave = useStoryAutosave({ storyId, initial: story, getValues, onSaved, onInvalid });
  const saveState = autosave.state;
  const autosaveChanged = autosave.changed;

  // Every change, typed or set (tags, cover, a restored revision), goes to autosave.
  useEffect(() => {
    const subscription = form.watch((_, info) => {
      if (!info.name) return;
      // A server refusal is about the value it was given; a new value may be fine.
      const name = info.name as Path<StoryFieldsInput>;
      if (form.getFieldState(name).error?.type === 'server') clearErrors(name);
      autosaveChanged();
    });
    return () => subscription.unsubscribe();
  }, [form, autosaveChanged, clearErrors]);

  const readings = useQuery(evidenceQueries.readings(buildId));
  const clearances = useQuery(evidenceQueries.clearances(buildId));
  const evidencePending = readings.isPending || clearances.isPending;
  const evidenceError = readings.error ?? clearances.error ?? null;
  const retryEvidence = () => {
    void readings.refetch();
    void clearances.refetch();
  };
  const targets = useMemo(() => claimTargetsFrom(readings.data ?? [], clearances.data ?? []), [readings.data, clearances.data]);
  const lookup = useMemo(() => ({ buildId, readings: readings.data ?? [], clearances: clearances.data ?? [] }), [buildId, readings.data, clearances.data]);
  const rendered = useMemo(() => renderStory(deferredBody, { targets }), [deferredBody, targets]);
  // What stops sending for review, from the same rule the server applies (once the evidence is in).
  const sendBlockers = useMemo(() => (evidencePending || evidenceError ? undefined : claimBlockers(rendered)), [evidencePending, evidenceError, rendered]);
  const pickable = useMemo(
    () => (readings.data && clearances.data ? pickableTargets(readings.data, clearances.data) : undefined),
    [readings.data, clearances.data],
  );
  const moments = useBuildMoments(buildId);
  const coverUrlFor = (momentId: number | null | undefined) =>
    momentId == null ? null : (moments.choices.find((c) => c.moment.id === momentId)?.moment.frameUrl ?? (momentId === story.coverMomentId ? story.coverUrl : null));

  const revision = useQuery({ ...storyQueries.revision(storyId, mode.kind === 'revision' ? mode.number : 0), enabled: mode.kind === 'revision' });
  const keep = useKeepRevision(storyId);

  // Leaving for another page of the app while text is unsaved: ask (the copy on this device stays either way).
  const blocker = useBlocker(({ currentLocation, nextLocation }) => saveState.kind !== 'saved' && currentLocation.pathname !== nextLocation.pathname);

  function openPicker() {
    const textarea = textareaRef.current;
    setPickerSelection(textarea ? textarea.value.slice(textarea.selectionStart, textarea.selectionEnd) : '');
    setPickerOpen(true);
  }

  function pick(target: PickableTarget) {
    setPickerOpen(false);
    const textarea = textareaRef.current;
    if (!textarea) return;
    // After the dialog has given focus back, so the edit lands in the text's undo history.
    window.requestAnimationFrame(() => applyEdit(textarea, insertClaim(textarea.value, textarea.selectionStart, textarea.selectionEnd, target)));
  }

  function reveal(start: number, end: number) {
    if (!wide) setTab('write');
    window.requestAnimationFrame(() => {
      if (textareaRef.current) revealRange(textareaRef.current, start, end);
    });
  }

  function setAll(next: StoryFieldsInput) {
    for (const name of storyFieldNames) setValue(name, next[name] as never, { shouldDirty: true, shouldValidate: true });
  }

  function onEditorKeyDown(event: KeyboardEvent<HTMLElement>) {
    if (hasShortcutModifier(event) && !event.shiftKey && event.key.toLowerCase() === 'k') {
      event.preventDefault();
      openPicker();
    }
  }

  async function showOther() {
    setConflictBusy('loading');
    setConflictError(null);
    try {
      const other = await fetchStoredStory(storyId);
      setMode({ kind: 'other', story: other });
      if (!wide) setTab('preview');
    } catch (error) {
      setConflictError(error);
    } finally {
      setConflictBusy(null);
    }
  }

  async function keepMine() {
    setConflictBusy('saving');
    setConflictError(null);
    try {
      const ok = await autosave.keepMine();
      if (ok) {
        setMode({ kind: 'live' });
        toast({ tone: 'success', title: 'Your version is saved', description: 'It is now the stored version of this entry.' });
      }
    } catch (error) {
      setConflictError(error);
    } finally {
      setConflictBusy(null);
    }
  }

  function takeOther() {
    if (mode.kind !== 'other') return;
    const other = mode.story;
    reset(fieldsOf(other));
    autosave.takeStored(other);
    setMode({ kind: 'live' });
    setConfirmTakeOther(false);
    toast({ title: 'The other version is in the editor', description: 'Your text from this tab was replaced by it.' });
  }

  async function keepVersion() {
    setKeepError(null);
    const saved = await autosave.flush();
    if (!saved) {
      setKeepError(new Error('the text could not be saved first, so there is nothing new to keep. See the save state at the top.'));
      return;
    }
    keep.mutate(undefined, {
      onSuccess: (rev) => toast({ tone: 'success', title: `Revision ${rev.number} kept` }),
      onError: (error) => setKeepError(error),
    });
  }

  function restoreRevision(number: number) {
    const rev = revision.data;
    setConfirmRestore(null);
    if (!rev || rev.number !== number) return;
    setAll(fieldsOf(rev));
    setMode({ kind: 'live' });
    if (!wide) setTab('write');
    toast({ title: `Revision ${number} is in the editor`, description: 'It saves as the current text in a moment.' });
  }

  const live: PreviewContent = {
    title: values.title ?? '',
    summary: values.summary ?? '',
    workDate: values.workDate ?? null,
    tags: normaliseTags(values.tags),
    coverUrl: coverUrlFor(values.coverMomentId),
    html: rendered.html,
    claims: rendered.claims,
  };

  const preview = (() => {
    if (mode.kind === 'revision') {
      if (revision.isPending) return <LoadingState label={`Loading revision ${mode.number}…`} />;
      if (!revision.data) return <ErrorState title="That revision could not be loaded" error={revision.error} onRetry={() => void revision.refetch()} />;
      const rev = revision.data;
      const out = renderStory(rev.body, { targets });
      return (
        <StoryPreview
          lookup={lookup}
          content={{ ...fieldsOf(rev), coverUrl: coverUrlFor(rev.coverMomentId), html: out.html, claims: out.claims }}
          banner={
            <PreviewBanner
              title={`Revision ${rev.number} · ${rev.reason === 'kept' ? 'kept' : 'autosave'} by ${rev.savedByName} — read-only`}
              actions={
                <>
                  <Button size="sm" variant="primary" onClick={() => setConfirmRestore(rev.number)}>
                    Restore into the editor
                  </Button>
                  <Button size="sm" variant="quiet" onClick={() => setMode({ kind: 'live' })}>
                    Back to my text
                  </Button>
                </>
              }
            />
          }
        />
      );
    }
    if (mode.kind === 'other') {
      const other = mode.story;
      const out = renderStory(other.body, { targets });
      const differ = changedFields(getValues(), fieldsOf(other));
      return (
        <StoryPreview
          lookup={lookup}
          content={{ ...fieldsOf(other), coverUrl: other.coverUrl, html: out.html, claims: out.claims }}
          banner={
            <PreviewBanner
              title="The other version, as saved elsewhere — read-only"
              detail={differ.length === 0 ? 'It is the same as your text.' : `It differs from yours in: ${differ.map((f) => fieldWords[f]).join(', ')}.`}
              actions={
                <>
                  <Button size="sm" variant="quiet" onClick={() => setMode({ kind: 'live' })}>
                    Back to my text
                  </Button>
                </>
              }
            />
          }
        />
      );
    }
    return (
      <StoryPreview
        lookup={lookup}
        content={live}
        banner={
          evidenceError ? (
            <p role="alert" className="mb-4 rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm">
              Claims are not checked: the build’s readings and clearances could not be loaded ({errorMessage(evidenceError)}).
            </p>
          ) : undefined
        }
      />
    );
  })();

  const writePanel = (
    <div className="flex min-w-0 flex-col gap-5">
      <form
        noValidate
        onSubmit={(event) => {
          event.preventDefault();
          void autosave.flush();
        }}
        onBlur={() => void autosave.flush()}
        className="flex flex-col gap-4"
        aria-label="Story"
      >
        <Field label="Title" required error={errors.title?.message}>
          <Input {...register('title')} autoComplete="off" />
        </Field>
        <Field label="Summary" error={errors.summary?.message} hint="One or two sentences readers see in lists.">
          <Textarea {...register('summary')} rows={2} />
        </Field>
        <div className="grid gap-4 sm:grid-cols-[minmax(0,12rem)_1fr]">
          <Controller
            control={control}
            name="workDate"
            render={({ field }) => (
              <Field label="Work date" error={errors.workDate?.message} hint="The day of the bench work.">
                <Input type="date" name={field.name} ref={field.ref} value={field.value ?? ''} onChange={(e) => field.onChange(e.target.value || null)} onBlur={field.onBlur} />
              </Field>
            )}
          />
          <Controller
            control={control}
            name="coverMomentId"
            render={({ field }) => (
              <div>
                <CoverPicker moments={moments} value={field.value ?? null} storedUrl={story.coverUrl} storedMomentId={story.coverMomentId} onChange={field.onChange} />
                {errors.coverMomentId?.message && <p className="mt-1 text-sm text-danger">{errors.coverMomentId.message}</p>}
              </div>
            )}
          />
        </div>
        <fieldset className="rounded-md border border-rule p-3">
          <legend className="px-1 text-sm font-medium">Tags</legend>
          <div className="grid gap-3 md:grid-cols-3">
            {storyTagGroups.map((group) => (
              <Controller
                key={group}
                control={control}
                name={`tags.${group}`}
                render={({ field }) => (
                  <TagInput
                    label={tagFields[group].label}
                    hint={tagFields[group].hint}
                    value={field.value ?? []}
                    onChange={field.onChange}
                    onBlur={field.onBlur}
                    error={firstMessage(errors.tags?.[group])}
                  />
                )}
              />
            ))}
          </div>
        </fieldset>
        <BodyEditor
          storyId={storyId}
          textareaRef={textareaRef}
          field={register('body')}
          body={body}
          error={errors.body?.message}
          onClaim={openPicker}
        />
      </form>
      {/* A moderator's flags come back here to answer, once the story has been reviewed (at the top while it is back with you). */}
      {story.state !== 'draft' && story.state !== 'changes-requested' && <FlagsToAnswer storyId={storyId} />}
      <ClaimsPanel
        claims={rendered.claims}
        broken={rendered.broken}
        evidence={{ pending: evidencePending, error: evidenceError, retry: retryEvidence }}
        onReveal={reveal}
        shortcut={shortcut}
      />
      <RevisionPanel
        storyId={storyId}
        viewing={mode.kind === 'revision' ? mode.number : null}
        onView={(number) => {
          setMode({ kind: 'revision', number });
          if (!wide) setTab('preview');
        }}
        onKeep={() => void keepVersion()}
        keeping={keep.isPending}
        keepError={keepError}
      />
    </div>
  );

  return (
    <div onKeyDown={onEditorKeyDown}>
      <p className="mb-2 text-sm" data-print="hide">
        <ButtonLink to={`/builds/${buildId}/stories`} variant="quiet" size="sm" className="-ml-2.5">
          ← Stories of {story.buildTitle}
        </ButtonLink>
      </p>
      <header className="mb-4 flex flex-wrap items-end justify-between gap-3 border-b border-rule pb-3">
        <title>{`${values.title?.trim() || 'Untitled story'} · Stories · Benchproof`}</title>
        <div className="min-w-0">
          <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">Story · {story.buildTitle}</p>
          <h1 className="text-xl font-semibold tracking-tight">Edit story</h1>
        </div>
        <div className="flex flex-wrap items-center gap-2">
          <Badge>{storyStateWords[story.state]}</Badge>
          <SaveStatus state={saveState} onRetry={() => void autosave.flush()} />
          {/* Moves are made on what is saved: the bar waits until the last change is stored. */}
          {saveState.kind === 'saved' ? (
            <StoryWorkflowBar
              storyId={storyId}
              state={story.state}
              lockVersion={autosave.lockVersion()}
              isBuilder
              hasPublicRevision={story.hasPublicRevision}
              blockers={sendBlockers}
              gateShownAt="story-send-gate"
            />
          ) : (
            <span className="text-xs text-ink-muted">Sending for review waits until your changes are saved.</span>
          )}
        </div>
      </header>

      {saveState.kind === 'saved' && sendBlockers && sendBlockers.length > 0 && actionsFor(story.state, 'builder', story.hasPublicRevision).includes('submit') && (
        <div className="mb-4" data-workflow-gate="">
          <GateClosed id="story-send-gate" action="submit" blockers={sendBlockers} />
        </div>
      )}
      {story.state === 'changes-requested' && (
        <ChangesRequestedNotice changes={story.changesRequested}>
          <FlagsToAnswer storyId={storyId} />
        </ChangesRequestedNotice>
      )}
      {offer && (
        <RestoreOffer
          at={offer.at}
          olderBase={offer.lockVersion < story.lockVersion}
          onRestore={() => {
            setAll(offer.values);
            setOffer(null);
          }}
          onDiscard={() => {
            clearLocalDraft(storyId);
            setOffer(null);
          }}
        />
      )}
      {saveState.kind === 'conflict' && (
        <ConflictNotice
          showingOther={mode.kind === 'other'}
          busy={conflictBusy}
          error={conflictError}
          onShowOther={() => void showOther()}
          onKeepMine={() => void keepMine()}
          onTakeOther={() => setConfirmTakeOther(true)}
        />
      )}
      {saveState.kind === 'failed' && (
        <p role="alert" className="mb-4 rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm">
          Not saved: {saveState.message} Your text is kept on this device and saving is tried again every few seconds.
        </p>
      )}

      {!wide && (
        <div role="tablist" aria-label="Editor view" className="mb-4 grid grid-cols-2 rounded-md border border-line p-0.5" data-print="hide">
          {(['write', 'preview'] as const).map((name) => (
            <button
              key={name}
              type="button"
              role="tab"
              id={`story-tab-${name}`}
              aria-controls={`story-panel-${name}`}
              aria-selected={tab === name}
              onClick={() => setTab(name)}
              className={cn('h-9 rounded-sm text-sm font-medium', tab === name ? 'bg-ink text-paper' : 'text-ink hover:bg-paper-2')}
            >
              {name === 'write' ? 'Write' : 'Preview'}
              {name === 'preview' && mode.kind !== 'live' && <span className="sr-only"> (showing another version)</span>}
            </button>
          ))}
        </div>
      )}

      <div className={cn('grid items-start gap-6', wide && 'grid-cols-[minmax(0,1fr)_minmax(0,1fr)]')}>
        <div {...(!wide && { role: 'tabpanel', id: 'story-panel-write', 'aria-labelledby': 'story-tab-write', hidden: tab !== 'write' })}>{writePanel}</div>
        <section
          aria-label={wide ? 'Preview' : undefined}
          className={cn('min-w-0', wide && 'sticky top-4 max-h-[calc(100dvh-2rem)] overflow-auto')}
          {...(!wide && { role: 'tabpanel', id: 'story-panel-preview', 'aria-labelledby': 'story-tab-preview', hidden: tab !== 'preview' })}
        >
          {wide && <p className="mb-2 text-xs font-medium tracking-wide text-ink-muted uppercase">Preview · as readers will see it</p>}
          {preview}
        </section>
      </div>

      <ClaimPicker
        open={pickerOpen}
        onOpenChange={setPickerOpen}
        targets={pickable}
        loading={evidencePending}
        error={evidenceError}
        onRetry={retryEvidence}
        selection={pickerSelection}
        shortcut={shortcut}
        onPick={pick}
        onClosed={() => textareaRef.current?.focus()}
      />
      <ConfirmDialog
        open={confirmTakeOther}
        onOpenChange={setConfirmTakeOther}
        title="Use the other version instead of yours?"
        description="The text in this tab is replaced by the version saved elsewhere. Yours is not kept anywhere after that."
        confirmLabel="Replace my text"
        cancelLabel="Keep my text"
        confirmVariant="danger"
        onConfirm={takeOther}
      />
      <ConfirmDialog
        open={confirmRestore !== null}
        onOpenChange={(open) => !open && setConfirmRestore(null)}
        title={`Restore revision ${confirmRestore ?? ''} into the editor?`}
        description="It replaces the text in the editor and then saves as the current version. The text you have now stays in the history only if it was kept: press “Keep this version” first to be sure."
        confirmLabel="Restore it"
        onConfirm={() => confirmRestore !== null && restoreRevision(confirmRestore)}
      />
      <ConfirmDialog
        open={blocker.state === 'blocked'}
        onOpenChange={(open) => !open && blocker.reset?.()}
        title="Leave with unsaved changes?"
        description="Your latest changes have not reached the server. They stay on this device and are offered when you open this story again."
        confirmLabel="Leave"
        cancelLabel="Stay here"
        onConfirm={() => blocker.proceed?.()}
      />
    </div>
  );
}

function normaliseTags(tags: StoryFieldsInput['tags'] | undefined): StoryTags {
  return { machine: tags?.machine ?? [], component: tags?.component ?? [], operation: tags?.operation ?? [] };
}

function PreviewBanner({ title, detail, actions }: { title: string; detail?: string; actions: ReactNode }) {
  return (
    <div className="-mx-5 -mt-6 mb-5 rounded-t-lg border-b border-line bg-paper-2 px-5 py-3 sm:-mx-7 sm:px-7" role="note">
      <p className="text-sm font-semibold">{title}</p>
      {detail && <p className="text-sm text-ink-muted">{detail}</p>}
      <div className="mt-2 flex flex-wrap gap-2">{actions}</div>
    </div>
  );
}
