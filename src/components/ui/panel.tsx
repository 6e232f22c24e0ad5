import { useId, type ReactNode } from 'react';
import { cn } from '@/lib/cn';

export interface PanelProps {
  title: ReactNode;
  /** One line under the title: what this section is for. */
  description?: ReactNode;
  /** Buttons or links at the right of the title. */
  actions?: ReactNode;
  /** Heading level of the title; 2 inside a page with an h1. */
  level?: 2 | 3;
  className?: string;
  children: ReactNode;
}

/** A titled section with a hairline border, labelled by its title. */
export function Panel({ title, description, actions, level = 2, className, children }: PanelProps) {
  const titleId = useId();
  const Heading = level === 2 ? 'h2' : 'h3';
  return (
    <section
      data-panel=""
      aria-labelledby={titleId}
      className={cn('rounded-lg border border-rule bg-paper', className)}
    >
      <header className="flex flex-wrap items-start justify-between gap-3 border-b border-rule px-4 py-3">
        <div className="min-w-0">
          <Heading id={titleId} className="text-md font-semibold">
            {title}
          </Heading>
          {description && <p className="text-sm text-ink-muted">{description}</p>}
        </div>
        {actions && <div className="flex shrink-0 items-center gap-2">{actions}</div>}
      </header>
      <div className="p-4">{children}</div>
    </section>
  );
}
