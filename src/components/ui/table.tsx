import type { ComponentProps, ReactNode } from 'react';
import { cn } from '@/lib/cn';

export interface TableProps extends ComponentProps<'table'> {
  /** Names the table for screen readers; shown above it unless `captionHidden`. */
  caption?: ReactNode;
  captionHidden?: boolean;
  /** Height of the scroll box the sticky header sticks within (CSS length). */
  maxHeight?: string;
}

/**
 * A dense work table in a scroll box with a sticky header. Mark numeric
 * columns with `numeric` on both `Th` and `Td` so figures right-align in mono.
 */
export function Table({ caption, captionHidden, maxHeight = '70vh', className, children, ...props }: TableProps) {
  return (
    <div
      data-table-frame=""
      className="overflow-auto rounded-md border border-rule bg-paper"
      style={{ maxHeight }}
    >
      <table className={cn('w-full border-collapse text-left text-sm', className)} {...props}>
        {caption && (
          <caption className={captionHidden ? 'sr-only' : 'px-3 py-2 text-left text-sm font-medium text-ink-muted'}>
            {caption}
          </caption>
        )}
        {children}
      </table>
    </div>
  );
}

export function THead({ className, ...props }: ComponentProps<'thead'>) {
  return <thead className={cn('sticky top-0 z-10 bg-paper-2', className)} {...props} />;
}

export function TBody({ className, ...props }: ComponentProps<'tbody'>) {
  return <tbody className={cn('[&>tr:nth-child(even)]:bg-paper-2/45', className)} {...props} />;
}

export function Tr({ className, ...props }: ComponentProps<'tr'>) {
  return <tr className={cn('border-b border-rule last:border-b-0', className)} {...props} />;
}

export function Th({
  numeric,
  className,
  scope = 'col',
  ...props
}: ComponentProps<'th'> & { numeric?: boolean }) {
  return (
    <th
      scope={scope}
      className={cn(
        'border-b border-line px-3 py-2 text-xs font-semibold uppercase tracking-wide text-ink-muted',
        numeric && 'text-right',
        className,
      )}
      {...props}
    />
  );
}

export function Td({
  numeric,
  mono,
  className,
  ...props
}: ComponentProps<'td'> & { numeric?: boolean; mono?: boolean }) {
  return (
    <td
      className={cn('px-3 py-1.5 align-middle', (numeric || mono) && 'figures', numeric && 'text-right', className)}
      {...props}
    />
  );
}
