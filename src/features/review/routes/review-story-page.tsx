import { useEffect, useMemo, useRef, useState, type MouseEvent } from 'react';
import { useQuery } from '@tanstack/react-query';
import { data, useParams, type LoaderFunctionArgs } from 'react-router-dom';
import type { EvidenceCheckDto, PublishBlocker } from '@shared/review/review.schema';
import type { ReviewSheet } from '@shared/review/review-sheet.schema';
import { claimTargetsFrom } from '@shared/stories/claims';
import { renderStory } from '@shared/stories/render';
import { storyIdParamsSchema, storyStateSentence, storyStateWords } from '@shared/stories/story.schema';
import { ButtonLink } from '@/components/ui/button';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';
import { Panel } from '@/components/ui/panel';
import { useToast } from '@/components/ui/toast';
import { authQueries } from '@/features/auth/api/auth-queries';
import { requireArea } from '@/features/auth/lib/require-role';
import { specLine } from '@/features/clearances/lib/clearance-view';
import { enteredFigures } from '@/features/readings/lib/reading-text';
import { StoryProse } from '@/features/stories/components/story-prose';
import { ApiError, errorMessage } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { useRecordCheck } from '../api/review-mutations';
import { reviewQueries } from '../api/review-queries';
import { AuditTrail } from '../components/audit-trail';
import { BlockersList } from '../components/blockers-list';
import { ClaimBox } from '../components/claim-box';
import { ClearanceReview } from '../components/clearance-review';
import { EvidenceList, type EvidenceItem } from '../components/evidence-list';
import { FlagDialog } from '../components/flag-dialog';
import { FlagsToAnswer } from '../components/flags-to-answer';
import type { JudgeAllowed } from '../components/judge-bar';
import { ReadingReview } from '../components/reading-review';
import { StoryWorkflowBar } from '../components/story-workflow-bar';
import { exactTime, relativeTime } from '../lib/review-format';
import { useNow } from '../lib/use-now';

function storyIdFrom(params: unknown): number {
  const parsed = storyIdParamsSchema.safeParse(params);
  if (!parsed.success) throw data(null, { status: 404 });
  return parsed.data.storyId;
}

export async function loader({ request, params }: LoaderFunctionArgs) {
  await requireArea('storyReview', request);
  const storyId = storyIdFrom(params);
  try {
    await queryClient.fetchQuery({ ...reviewQueries.sheet(storyId), staleTime: 0 });
  } catch (error) {
    // Not there or not yours: the not-found page. Anything else: the page shows it with a retry.
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
  }
  return null;
}

/** /review/stories/:storyId — a moderator checks a story reading by reading; its builder sees the flags to answer. */
export function Component() {
  const storyId = storyIdFrom(useParams());
  const sheet = useQuery(reviewQueries.sheet(storyId));
  const me = useQuery(authQueries.me());

  if (sheet.isPending) return <LoadingState label="Loading the story and its evidence…" />;
  if (!sheet.data) {
    return (
      <>
        <PageHeader title="Review" />
        <ErrorState title="This story’s evidence could not be loaded" error={sheet.error} onRetry={() => void sheet.refetch()} retrying={sheet.isRefetching} />
      </>
    );
  }
  const isBuilder = me.data?.id === sheet.data.story.builderId;
  return <ReviewScreen key={storyId} sheet={sheet.data} meId={me.data?.id} isBuilder={isBuilder} isAdmin={me.data?.role === 'admin'} />;
}

function itemsOf(sheet: ReviewSheet): EvidenceItem[] {
  return [
    ...sheet.readings.map(({ reading, check, heard }) => ({
      id: `reading:${reading.id}`,
      kind: 'reading' as const,
      name: reading.name,
      key: reading.key,
      figure: enteredFigures(reading),
      detail: reading.instrumentName,
      check,
      heardDiffers: heard?.state === 'disagrees',
    })),
    ...sheet.clearances.map(({ clearance, check, asPublished, change }) => ({
      id: `clearance:${clearance.id}`,
      kind: 'clearance' as const,
      name: clearance.name,
      key: clearance.key,
      figure: clearance.result?.display ?? 'cannot be worked out',
      detail: clearance.spec ? specLine(clearance.spec) : 'no spec attached',
      check,
      differsFromRevision: change && asPublished ? asPublished.revision : null,
    })),
  ];
}

/** Keys typed into a text field, or while a dialog is open, are not shortcuts. */
function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  return target.isContentEditable || ['INPUT', 'TEXTAREA', 'SELECT', 'VIDEO'].includes(target.tagName) || Boolean(target.closest('[role="dialog"]'));
}

function ReviewScreen({ sheet, meId, isBuilder, isAdmin }: { sheet: ReviewSheet; meId: number | undefined; isBuilder: boolean; isAdmin: boolean }) {
  const { story } = sheet;
  const { toast } = useToast();
  const now = useNow();
  const record = useRecordCheck();
  const items = useMemo(() => itemsOf(sheet), [sheet]);
  const [chosen, setChosen] = useState<string | null>(null);
  const [flagging, setFlagging] = useState<EvidenceItem | null>(null);
  const [announcement, setAnnouncement] = useState('');
  const detailRef = useRef<HTMLElement>(null);
  // A row that is no longer in the sheet (edited out of the story) falls back to the first.
  const selected = items.find((i) => i.id === chosen) ?? items[0] ?? null;
  const selectedIndex = selected ? items.indexOf(selected) : -1;

  const claim = sheet.claim && new Date(sheet.claim.expiresAt) > now ? sheet.claim : null;
  const allowed: JudgeAllowed =
    story.state !== 'in-review'
      ? { ok: false, why: `Readings are checked while a story is in review; this one is ${storyStateSentence[story.state]}.` }
      : !claim || claim.moderatorId !== meId
        ? { ok: false, why: claim ? `${claim.moderatorName} holds this story; you can look, not check.` : 'Take the story for review first (“Take for review” above), then check.' }
        : { ok: true };

  const checksOf = (item: EvidenceItem): EvidenceCheckDto[] => {
    const [type, id] = item.id.split(':');
    return sheet.checks.filter((c) => c.subjectType === type && c.subjectId === Number(id));
  };

  function subjectOf(item: EvidenceItem) {
    return { type: item.kind, id: Number(item.id.split(':')[1]), name: item.name };
  }

  async function markChecked(item: EvidenceItem) {
    if (!allowed.ok || record.isPending) return;
    const subject = subjectOf(item);
    try {
      await record.mutateAsync({ storyId: story.id, subjectType: subject.type, subjectId: subject.id, state: 'checked' });
      setAnnouncement(`${item.name} marked checked.`);
      // On to the next one that still needs a look, so a run of good readings goes c, c, c.
      const next = items.slice(items.indexOf(item) + 1).find((i) => !i.check || !i.check.current || i.check.state !== 'checked');
      if (next) setChosen(next.id);
    } catch (error) {
      toast({ tone: 'error', title: `“${item.name}” was not marked checked`, description: errorMessage(error) });
    }
  }

  async function flag(input: Parameters<typeof record.mutateAsync>[0], item: EvidenceItem) {
    await record.mutateAsync(input);
    setFlagging(null);
    setAnnouncement(`${item.name} flagged.`);
  }

  function move(by: number) {
    const next = items[Math.max(0, Math.min(items.length - 1, selectedIndex + by))];
    if (next) setChosen(next.id);
  }

  /** A key that can do nothing now says why, on screen and to a screen reader, instead of nothing. */
  function refuseKey(key: string) {
    if (allowed.ok) return false;
    const why = allowed.why;
    setAnnouncement(`${key.toUpperCase()} did nothing: ${why}`);
    toast({ tone: 'info', title: `${key === 'c' ? 'Nothing was checked' : 'Nothing was flagged'}`, description: why });
    return true;
  }
  const judgeKeys = {
    markChecked: (item: EvidenceItem) => !refuseKey('c') && void markChecked(item),
    openFlag: (item: EvidenceItem) => !refuseKey('f') && setFlagging(item),
  };

  // j/k, c and f anywhere on the page except in text fields and dialogs; arrows live in the list itself.
  const keys = useRef({ move, ...judgeKeys, selected, isBuilder });
  keys.current = { move, ...judgeKeys, selected, isBuilder };
  useEffect(() => {
    function onKey(event: KeyboardEvent) {
      if (event.defaultPrevented || event.ctrlKey || event.metaKey || event.altKey || isTyping(event.target)) return;
      const k = keys.current;
      if (event.key === 'j') k.move(1);
      else if (event.key === 'k') k.move(-1);
      else if (event.key === 'c' && k.selected && !k.isBuilder) k.markChecked(k.selected);
      else if (event.key === 'f' && k.selected && !k.isBuilder) k.openFlag(k.selected);
      else return;
      event.preventDefault();
    }
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);

  const targets = useMemo(
    // Every claim names a reading or clearance of the build; those that exist are the ones the sheet lists.
    () => claimTargetsFrom(sheet.readings.map((r) => r.reading), sheet.clearances.map((c) => c.clearance)),
    [sheet],
  );
  const rendered = useMemo(() => renderStory(story.body, { targets }), [story.body, targets]);

  function openSubject(subject: PublishBlocker['subject'] | { type: 'reading' | 'clearance'; key: string }) {
    const item = items.find((i) => i.kind === subject.type && i.key === subject.key);
    if (!item) return;
    setChosen(item.id);
    detailRef.current?.scrollIntoView({ block: 'start', behavior: 'smooth' });
  }

  function onProseClick(event: MouseEvent<HTMLDivElement>) {
    const link = (event.target as HTMLElement).closest('a.claim');
    const target = link?.getAttribute('data-claim');
    if (!target) return;
    event.preventDefault();
    const [type, key] = target.split(':');
    if ((type === 'reading' || type === 'clearance') && key) openSubject({ type, key });
  }

  const subjectName = (type: string, id: number) => items.find((i) => i.id === `${type}:${id}`)?.name ?? null;
  const headingId = 'review-subject-heading';
  const judge = (item: EvidenceItem) =>
    isBuilder ? undefined : { allowed, pending: record.isPending, onChecked: () => void markChecked(item), onFlag: () => setFlagging(item) };

  const workflow = (
    <Panel title="Workflow">
      <StoryWorkflowBar
        storyId={story.id}
        state={story.state}
        lockVersion={story.lockVersion}
        isBuilder={isBuilder}
        hasPublicRevision={story.hasPublicRevision}
        blockers={isBuilder ? undefined : sheet.blockers}
        blockersListedNearby={!isBuilder}
      />
    </Panel>
  );

  return (
    <>
      <PageHeader
        eyebrow={`${isBuilder ? 'Review of your story' : 'Review'} · ${story.buildTitle}`}
        title={story.title}
        documentTitle={`Review: ${story.title}`}
        description={
          <>
            {storyStateWords[story.state].replace(/^./, (c) => c.toUpperCase())}
            {story.submittedAt && (
              <>
                {' '}
                · sent <time dateTime={story.submittedAt}>{relativeTime(story.submittedAt, now)}</time> ({exactTime(story.submittedAt)})
              </>
            )}
            {story.hasPublicRevision && story.state !== 'published' && story.state !== 'withdrawn' && ' · a new revision of a published story'}
          </>
        }
        actions={
          isBuilder ? (
            <ButtonLink to={`/stories/${story.id}/edit`} variant="secondary" size="sm">
              Open in the editor
            </ButtonLink>
          ) : (
            <ButtonLink to="/review" variant="secondary" size="sm">
              Back to the queue
            </ButtonLink>
          )
        }
      />
      <p className="sr-only" aria-live="polite">
        {announcement}
      </p>

      {/* Small screens read top to bottom: hold, evidence, blockers and workflow, then the story and its record. */}
      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_19rem] lg:grid-rows-[auto_1fr_auto]">
        <div className="lg:col-start-2 lg:row-start-1">
          {isBuilder ? (
            workflow
          ) : (
            <Panel title="Your hold on it">
              <ClaimBox sheet={sheet} meId={meId} now={now} />
            </Panel>
          )}
        </div>

        <div className="flex min-w-0 flex-col gap-6 lg:col-start-1 lg:row-span-2 lg:row-start-1">
          {isBuilder && (
            <Panel title="Flags to answer" description="What a moderator found. Answer each one, correct the reading in the build if needed, then send the story for review again.">
              {story.changesRequested && (
                <figure className="mb-3 max-w-prose" data-changes-requested="">
                  <blockquote className="border-l-2 border-danger pl-3 text-md" data-changes-reason="">
                    {story.changesRequested.reason}
                  </blockquote>
                  <figcaption className="mt-1 text-sm text-ink-muted">
                    — {story.changesRequested.moderatorName}, asking for changes{' '}
                    <time dateTime={story.changesRequested.at}>{relativeTime(story.changesRequested.at, now)}</time>
                  </figcaption>
                </figure>
              )}
              <FlagsToAnswer storyId={story.id} />
            </Panel>
          )}
          <section aria-labelledby="evidence-heading" className="flex flex-col gap-3">
            <div className="flex flex-wrap items-baseline justify-between gap-2">
              <h2 id="evidence-heading" className="text-lg font-semibold">
                {isBuilder ? 'Where each reading stands' : 'Evidence to check'}
              </h2>
              {!isBuilder && items.length > 0 && (
                <p className="text-xs text-ink-muted" id="review-keys">
                  Keys: <kbd className="figures">j</kbd>/<kbd className="figures">k</kbd> next/previous (<kbd className="figures">↓</kbd>/
                  <kbd className="figures">↑</kbd> in the list) · <kbd className="figures">c</kbd> checked · <kbd className="figures">f</kbd> flag
                </p>
              )}
            </div>
            {items.length === 0 ? (
              <p className="rounded-md border border-dashed border-line px-4 py-6 text-sm text-ink-muted">
                The story cites no readings or clearances, so there is nothing to check against the footage. Ask the builder to link its
                claims to their evidence.
              </p>
            ) : (
              <EvidenceList items={items} selectedId={selected?.id ?? null} onSelect={setChosen} label="Readings and clearances the story relies on" />
            )}
          </section>

          {selected && (
            <section ref={detailRef} aria-labelledby={headingId} className="scroll-mt-4 rounded-lg border border-rule bg-paper p-4" data-current={selected.id}>
              <p className="figures mb-2 text-xs text-ink-muted">
                {selectedIndex + 1} of {items.length}
              </p>
              {selected.kind === 'reading' ? (
                <ReadingReview
                  item={sheet.readings.find((r) => `reading:${r.reading.id}` === selected.id)!}
                  checks={checksOf(selected)}
                  headingId={headingId}
                  judge={judge(selected)}
                />
              ) : (
                <ClearanceReview
                  item={sheet.clearances.find((c) => `clearance:${c.clearance.id}` === selected.id)!}
                  readings={sheet.readings}
                  checks={checksOf(selected)}
                  headingId={headingId}
                  judge={judge(selected)}
                  onOpenReading={(id) => setChosen(`reading:${id}`)}
                />
              )}
            </section>
          )}
        </div>

        {!isBuilder && (
          <div className="flex flex-col gap-4 lg:sticky lg:top-4 lg:col-start-2 lg:row-span-2 lg:row-start-2 lg:self-start">
            {/* The gate only matters while the story is in review. */}
            {story.state === 'in-review' && (
              <Panel title="What stops publishing" description="Worked out again after every check.">
                <BlockersList blockers={sheet.blockers} onOpen={openSubject} />
              </Panel>
            )}
            {workflow}
          </div>
        )}

        <div className="flex min-w-0 flex-col gap-6 lg:col-start-1 lg:row-start-3">
          <Panel title="The story as sent" description="Read-only. Claims open their evidence above.">
            {sheet.broken.length > 0 && (
              <p className="mb-3 text-sm text-danger">
                {sheet.broken.length} link{sheet.broken.length === 1 ? '' : 's'} look like claims but are not: see what stops publishing.
              </p>
            )}
            <StoryProse html={rendered.html} onClick={onProseClick} />
          </Panel>

          {!isBuilder && (
            <Panel title="Record" description="Every move on this story, newest first.">
              <AuditTrail storyId={story.id} subjectName={subjectName} showRecord={isAdmin} />
            </Panel>
          )}
        </div>
      </div>

      {flagging && (
        <FlagDialog
          key={flagging.id}
          storyId={story.id}
          subject={subjectOf(flagging)}
          pending={record.isPending}
          onCancel={() => setFlagging(null)}
          onSubmit={(input) => flag(input, flagging)}
        />
      )}
    </>
  );
}
