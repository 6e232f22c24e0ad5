import { Fragment } from 'react';
import { snippetParts } from '@shared/public/search-snippet';

/**
 * Where a search matched in a story: the server's snippet as text, each match in a <mark>. The
 * snippet is never read as HTML, so whatever a story's text holds is shown as written.
 */
export function SearchSnippet({ snippet }: { snippet: string }) {
  return (
    <p className="text-sm text-ink" data-search-snippet>
      {snippetParts(snippet).map((part, i) =>
        part.marked ? (
          <mark key={i} className="rounded-sm bg-accent-wash px-0.5 font-medium text-ink">
            {part.text}
          </mark>
        ) : (
          <Fragment key={i}>{part.text}</Fragment>
        ),
      )}
    </p>
  );
}
