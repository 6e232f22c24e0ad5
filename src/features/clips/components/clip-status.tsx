import type { Clip } from '@shared/clips/clip.schema';
import { Badge } from '@/components/ui/badge';
import { Progress } from '@/components/ui/progress';
import { cn } from '@/lib/cn';

/** The status in plain words, for badges and announcements: "Processing 42 %". */
export function clipStatusWords(clip: Pick<Clip, 'status' | 'progress'>): string {
  switch (clip.status) {
    case 'uploaded':
      return 'Uploaded';
    case 'processing':
      return `Processing ${Math.round(clip.progress)} %`;
    case 'ready':
      return 'Ready';
    case 'failed':
      return 'Failed';
  }
}

/**
 * A clip's status as a shape and words, never colour alone: hollow circle
 * (uploaded), half-filled circle (processing), filled circle (ready), open
 * cross (failed, followed by the server's reason).
 */
export function ClipStatusBadge({ clip, showProgress = true, className }: { clip: Clip; showProgress?: boolean; className?: string }) {
  const failed = clip.status === 'failed';
  return (
    <span className={cn('inline-flex min-w-0 flex-col gap-1', className)}>
      <span className="inline-flex flex-wrap items-baseline gap-x-1.5">
        <Badge
          tone={clip.status === 'ready' ? 'strong' : 'neutral'}
          className={cn('figures', failed && 'border-danger/50 bg-danger-wash text-danger')}
        >
          <StatusShape status={clip.status} />
          {clipStatusWords(clip)}
          {failed && <span className="sr-only">:</span>}
        </Badge>
        {failed && <span className="text-xs text-danger">{clip.failureReason ?? 'The server gave no reason.'}</span>}
      </span>
      {showProgress && clip.status === 'processing' && (
        <Progress size="sm" value={clip.progress} label={`Processing of ${clip.title}`} valueText={`${Math.round(clip.progress)} %`} />
      )}
      {showProgress && clip.status === 'uploaded' && (
        <Progress size="sm" value={null} label={`${clip.title}: waiting to be processed`} valueText="Waiting to be processed" />
      )}
    </span>
  );
}

function StatusShape({ status }: { status: Clip['status'] }) {
  return (
    <svg viewBox="0 0 12 12" className="size-2.5 shrink-0" aria-hidden="true">
      {status === 'uploaded' && <circle cx="6" cy="6" r="4.5" fill="none" stroke="currentColor" strokeWidth="1.4" />}
      {status === 'processing' && (
        <>
          <circle cx="6" cy="6" r="4.5" fill="none" stroke="currentColor" strokeWidth="1.4" />
          <path d="M6 1.5a4.5 4.5 0 0 1 0 9z" fill="currentColor" />
        </>
      )}
      {status === 'ready' && <circle cx="6" cy="6" r="5" fill="currentColor" />}
      {status === 'failed' && <path d="M2.5 2.5l7 7M9.5 2.5l-7 7" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />}
    </svg>
  );
}
