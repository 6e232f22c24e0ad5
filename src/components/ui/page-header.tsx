import type { ReactNode } from 'react';

export interface PageHeaderProps {
  /** The page's h1; also the browser tab title unless `documentTitle` is given. */
  title: string;
  documentTitle?: string;
  /** Small line above the title: the section or the record's code. */
  eyebrow?: ReactNode;
  description?: ReactNode;
  actions?: ReactNode;
}

/** A page's h1, its lead and its actions; sets the document title (React 19 hoists <title>). */
export function PageHeader({ title, documentTitle, eyebrow, description, actions }: PageHeaderProps) {
  return (
    <div className="mb-6 flex flex-wrap items-end justify-between gap-4">
      <title>{`${documentTitle ?? title} · Benchproof`}</title>
      <div className="min-w-0">
        {eyebrow && <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">{eyebrow}</p>}
        <h1 className="text-2xl font-semibold tracking-tight">{title}</h1>
        {description && <div className="mt-1 max-w-prose text-base text-ink-muted">{description}</div>}
      </div>
      {actions && <div className="flex flex-wrap items-center gap-2">{actions}</div>}
    </div>
  );
}
