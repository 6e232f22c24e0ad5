import type { ReactNode } from 'react';
import { ApiError, clientErrorCodes, errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { Button } from './button';

/** Shown while a view's data is on its way. Announced politely to screen readers. */
export function LoadingState({ label = 'Loading…', className }: { label?: ReactNode; className?: string }) {
  return (
    <div role="status" aria-busy="true" className={cn('flex flex-col items-start gap-3 py-8', className)}>
      <span className="relative block h-0.5 w-40 overflow-hidden bg-rule" aria-hidden="true">
        <span className="absolute inset-y-0 left-0 w-1/3 animate-scribe bg-ink" />
      </span>
      <span className="text-sm text-ink-muted">{label}</span>
    </div>
  );
}

export interface EmptyStateProps {
  title: ReactNode;
  /** What to do next, in a sentence or two. */
  children: ReactNode;
  /** The next step as a button or link. */
  action?: ReactNode;
  className?: string;
}

/** Nothing here yet, and what to do about it. */
export function EmptyState({ title, children, action, className }: EmptyStateProps) {
  return (
    <div className={cn('rounded-lg border border-dashed border-line px-5 py-8', className)}>
      <h2 className="text-md font-semibold">{title}</h2>
      <div className="mt-1 max-w-prose text-sm text-ink-muted">{children}</div>
      {action && <div className="mt-4 flex flex-wrap gap-2">{action}</div>}
    </div>
  );
}

export interface ErrorStateProps {
  /** What happened, short. Defaults to a heading based on the error. */
  title?: ReactNode;
  /** The thrown value; its message is shown, and its code for support. */
  error?: unknown;
  /** What to do next. Defaults to advice based on the error. */
  whatToDo?: ReactNode;
  onRetry?: () => void;
  retryLabel?: ReactNode;
  retrying?: boolean;
  className?: string;
}

/** Something failed: what happened, what to do, and a way to try again. */
export function ErrorState({
  title,
  error,
  whatToDo,
  onRetry,
  retryLabel = 'Try again',
  retrying,
  className,
}: ErrorStateProps) {
  const code = error instanceof ApiError ? error.code : null;
  return (
    <div role="alert" className={cn('rounded-lg border border-danger/50 bg-danger-wash/50 px-5 py-6', className)}>
      <h2 className="flex items-center gap-2 text-md font-semibold">
        <svg viewBox="0 0 16 16" className="size-4 shrink-0 text-danger" aria-hidden="true">
          <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
          <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
        </svg>
        {title ?? defaultTitle(error)}
      </h2>
      {error !== undefined && <p className="mt-1 text-sm text-ink">{errorMessage(error)}</p>}
      <div className="mt-1 max-w-prose text-sm text-ink-muted">{whatToDo ?? defaultAdvice(error)}</div>
      {(onRetry || code) && (
        <div className="mt-4 flex flex-wrap items-center gap-3">
          {onRetry && (
            <Button onClick={onRetry} loading={retrying} loadingText="Trying again…">
              {retryLabel}
            </Button>
          )}
          {code && <span className="figures text-xs text-ink-muted">code: {code}</span>}
        </div>
      )}
    </div>
  );
}

function defaultTitle(error: unknown): string {
  if (error instanceof ApiError && error.code === clientErrorCodes.network) return 'No connection to Benchproof';
  return 'This could not be loaded';
}

function defaultAdvice(error: unknown): string {
  if (error instanceof ApiError) {
    if (error.code === clientErrorCodes.network) return 'Check your connection, then try again.';
    if (error.status >= 500) return 'The problem is on our side. Try again in a minute; nothing you entered is lost.';
    if (error.status === 401) return 'Sign in again, then retry.';
  }
  return 'Try again. If it keeps failing, reload the page.';
}
