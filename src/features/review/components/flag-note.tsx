import { useState } from 'react';
import { Link } from 'react-router-dom';
import type { BuildFlag } from '@shared/review/review.schema';
import { Button } from '@/components/ui/button';
import { exactTime, relativeTime } from '../lib/review-format';
import { EvidenceStateGlyph } from './evidence-state-badge';
import { AnswerForm } from './flags-to-answer';

/**
 * A moderator's flag where the flagged reading or clearance is shown in the workspace: who
 * flagged it, in which story, their words, the answers so far, and a box to answer right there.
 */
export function FlagNote({ flag, className }: { flag: BuildFlag; className?: string }) {
  const [answering, setAnswering] = useState(false);
  const last = flag.answers.at(-1);
  return (
    <div className={`rounded-md border border-danger/40 bg-danger-wash/30 px-3 py-2 text-sm ${className ?? ''}`} data-flag-note={`${flag.subjectType}:${flag.subjectKey}`}>
      <p className="flex flex-wrap items-center gap-x-1.5">
        <EvidenceStateGlyph state="flagged" className="text-danger" />
        <span className="font-semibold">Flagged by {flag.moderatorName}</span>
        <span className="text-ink-muted">
          in “<Link to={`/stories/${flag.storyId}/edit`}>{flag.storyTitle}</Link>”,{' '}
          <time dateTime={flag.createdAt} title={exactTime(flag.createdAt)}>
            {relativeTime(flag.createdAt)}
          </time>
        </span>
        {!flag.current && <span className="text-verdict-undecided">· changed since: a moderator will check it again</span>}
      </p>
      <blockquote className="mt-1 border-l-2 border-danger/60 pl-3">{flag.comment}</blockquote>
      {last && (
        <p className="mt-1 text-ink-muted">
          Your last answer: <span className="text-ink">“{last.body}”</span>
          {flag.answers.length > 1 && ` (and ${flag.answers.length - 1} before it)`}
        </p>
      )}
      {answering ? (
        <AnswerForm checkId={flag.id} subjectName={flag.subjectName} />
      ) : (
        <Button size="sm" variant="secondary" className="mt-2" onClick={() => setAnswering(true)}>
          Answer the flag<span className="sr-only"> on {flag.subjectName}</span>
        </Button>
      )}
    </div>
  );
}
