import type { EvidenceCheckDto } from '@shared/review/review.schema';
import { Button } from '@/components/ui/button';
import { exactTime, relativeTime } from '../lib/review-format';
import { EvidenceStateGlyph } from './evidence-state-badge';

/** Whether the viewer may record a check now, and if not, why in words. */
export type JudgeAllowed = { ok: true } | { ok: false; why: string };

function Key({ children }: { children: string }) {
  return (
    <kbd className="figures rounded-sm border border-current/40 px-1 text-2xs leading-4" aria-hidden="true">
      {children}
    </kbd>
  );
}

/** What the check buttons need. */
export interface JudgeProps {
  allowed: JudgeAllowed;
  pending: boolean;
  onChecked: () => void;
  onFlag: () => void;
}

/** "Checked" and "Flag…" for the item on screen, with their keys; why they are off when they are. */
export function JudgeBar({ allowed, pending, onChecked, onFlag }: JudgeProps) {
  return (
    <div className="flex flex-col gap-1.5" data-print="hide">
      <div className="flex flex-wrap gap-2">
        <Button variant="primary" onClick={onChecked} disabled={!allowed.ok} loading={pending} loadingText="Recording…" aria-keyshortcuts="c">
          <EvidenceStateGlyph state="checked" />
          Checked <Key>c</Key>
        </Button>
        <Button variant="secondary" onClick={onFlag} disabled={!allowed.ok || pending} aria-keyshortcuts="f">
          <EvidenceStateGlyph state="flagged" />
          Flag… <Key>f</Key>
        </Button>
      </div>
      {!allowed.ok && <p className="text-sm text-ink-muted">{allowed.why}</p>}
    </div>
  );
}

/** Every check of one reading or clearance in this story, newest first, with the builder's answers. */
export function SubjectChecks({ checks }: { checks: readonly EvidenceCheckDto[] }) {
  if (checks.length === 0) return <p className="text-sm text-ink-muted">Not checked yet in this story.</p>;
  return (
    <ol className="flex flex-col gap-2" aria-label="Checks so far, newest first">
      {checks.map((c) => (
        <li key={c.id} className="text-sm">
          <p className="flex flex-wrap items-center gap-x-1.5">
            <EvidenceStateGlyph state={c.state} className={c.state === 'flagged' ? 'text-danger' : undefined} />
            <span className="font-medium">{c.state === 'flagged' ? 'Flagged' : 'Checked'}</span>
            <span className="text-ink-muted">
              by {c.moderatorName}, <time dateTime={c.createdAt} title={exactTime(c.createdAt)}>{relativeTime(c.createdAt)}</time>
              {!c.current && ' — on an earlier version'}
            </span>
          </p>
          {c.comment && <p className="mt-0.5 border-l-2 border-rule pl-2">{c.comment}</p>}
          {c.answers.map((a) => (
            <p key={a.id} className="mt-1 ml-4 rounded-sm bg-paper-2 px-2 py-1">
              <span className="font-medium">{a.authorName} answered:</span> <span className="whitespace-pre-line">{a.body}</span>{' '}
              <time className="text-xs text-ink-muted" dateTime={a.createdAt} title={exactTime(a.createdAt)}>
                {relativeTime(a.createdAt)}
              </time>
            </p>
          ))}
        </li>
      ))}
    </ol>
  );
}
