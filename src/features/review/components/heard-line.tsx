import type { HeardWitnessDto } from '@shared/review/review-sheet.schema';
import { clipTime } from '@shared/review/heard';
import { Button } from '@/components/ui/button';
import { cn } from '@/lib/cn';

/** Sound heard: three bars of a level meter. With `differs`, the middle one is a warning mark. */
function HeardGlyph({ differs }: { differs: boolean }) {
  return (
    <svg viewBox="0 0 16 16" className="mt-0.5 size-4 shrink-0" aria-hidden="true">
      {differs ? (
        <>
          <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
          <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
        </>
      ) : (
        <path d="M3 6v4M6 3.5v9M9 5v6M12 2.5v11" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
      )}
    </svg>
  );
}

/** Nothing to hear: a flat line. */
function QuietGlyph() {
  return (
    <svg viewBox="0 0 16 16" className="mt-0.5 size-4 shrink-0" aria-hidden="true">
      <path d="M2 8h12" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
    </svg>
  );
}

const sentence = (text: string) => `${text.charAt(0).toUpperCase()}${text.slice(1)}${/[.!?]$/.test(text) ? '' : '.'}`;

/** The line's words after "heard ": "‘five hundred sixty four and two tenths’ at 0:00.2 → … agrees with the logged 0.5642 in". */
const whatWasHeard = (text: string) => text.replace(/^(heard|read) /, '');

/**
 * The reading's second witness, beside its still: what the builder's voice said near the moment.
 * A calm line when it agrees with the figure logged; a marked one when it does not (not a flag:
 * it blocks nothing, it asks for a second look); a quiet one when nothing was heard or the clip
 * has not been listened to. `onListen` plays the clip, with its sound, from where it was said.
 */
export function HeardLine({ heard, onListen, className }: { heard: HeardWitnessDto | undefined; onListen?: (ms: number) => void; className?: string }) {
  if (!heard) return null;
  const listen =
    onListen && heard.atMs !== undefined ? (
      <Button variant="secondary" size="sm" className="h-7 shrink-0 px-2 text-xs" onClick={() => onListen(heard.atMs!)}>
        Listen from <span className="figures">{clipTime(heard.atMs)}</span>
      </Button>
    ) : null;

  if (heard.state === 'agrees' || heard.state === 'disagrees') {
    const differs = heard.state === 'disagrees';
    return (
      <div
        data-heard={heard.state}
        className={cn(
          'flex flex-wrap items-start justify-between gap-x-3 gap-y-2 rounded-md border px-3 py-2 text-sm',
          differs ? 'border-danger/60 border-l-4 bg-danger-wash/50' : 'border-rule bg-paper-2/60',
          className,
        )}
      >
        <p className="flex min-w-0 flex-1 basis-64 items-start gap-2 text-ink">
          <span className={differs ? 'text-danger' : 'text-verdict-conforms'}>
            <HeardGlyph differs={differs} />
          </span>
          <span className="min-w-0">
            <strong className="font-semibold">
              {heard.source === 'display'
                ? differs
                  ? 'Read off the display, not what was logged: '
                  : 'Read off the display: '
                : differs
                  ? 'Heard on the clip, not what was logged: '
                  : 'Heard on the clip: '}
            </strong>
            <span data-heard-text="">{sentence(whatWasHeard(heard.text))}</span>
            {differs && <span className="block text-xs text-ink-muted">Watch and listen again before checking. This is not a flag and stops nothing on its own.</span>}
          </span>
        </p>
        {listen}
      </div>
    );
  }

  return (
    <p data-heard={heard.state} className={cn('flex items-start gap-2 px-1 text-sm text-ink-muted', className)}>
      <QuietGlyph />
      <span>
        <span className="font-medium text-ink">{heard.state === 'nothing-heard' ? 'Nothing heard near this moment' : notListenedHeading(heard.text)}</span>
        <span className="text-xs"> · {sentence(detailOf(heard.text))}</span>
      </span>
    </p>
  );
}

/** "Not listened to yet" while the clip waits or is being heard; "Not listened to" when it cannot be. */
function notListenedHeading(text: string): string {
  return text.startsWith('not listened to yet') ? 'Not listened to yet' : 'Not listened to';
}

/** What follows the heading in the server's line ("no length was said between …"). */
function detailOf(text: string): string {
  const at = text.indexOf(': ');
  return at < 0 ? text : text.slice(at + 2);
}
