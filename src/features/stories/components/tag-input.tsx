import { useId, useState, type KeyboardEvent } from 'react';
import { storyTagsSchema } from '@shared/stories/story.schema';
import { cn } from '@/lib/cn';

const tagSchema = storyTagsSchema.shape.machine.unwrap().element;
const MAX_TAGS = 10;

export interface TagInputProps {
  label: string;
  hint: string;
  value: string[];
  onChange: (tags: string[]) => void;
  onBlur?: () => void;
  /** An error from the form (the server's or the schema's). */
  error?: string;
}

/** A group of tags as chips: type one and press Enter (or a comma) to add it, Backspace in an empty box removes the last. */
export function TagInput({ label, hint, value, onChange, onBlur, error }: TagInputProps) {
  const id = useId();
  const [draft, setDraft] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const shown = problem ?? error ?? null;

  function add(text: string) {
    const tag = text.trim();
    if (!tag) return;
    const parsed = tagSchema.safeParse(tag);
    if (!parsed.success) {
      setProblem(parsed.error.issues[0]?.message ?? 'that tag cannot be used');
      return;
    }
    if (value.some((t) => t.toLowerCase() === parsed.data.toLowerCase())) {
      setProblem(`“${parsed.data}” is already a tag here`);
      setDraft('');
      return;
    }
    if (value.length >= MAX_TAGS) {
      setProblem(`at most ${MAX_TAGS} tags in a group`);
      return;
    }
    setProblem(null);
    setDraft('');
    onChange([...value, parsed.data]);
  }

  function onKeyDown(event: KeyboardEvent<HTMLInputElement>) {
    if (event.key === 'Enter') {
      // Enter adds the tag; it never submits the form around it.
      event.preventDefault();
      add(draft);
    } else if (event.key === 'Backspace' && draft === '' && value.length > 0) {
      event.preventDefault();
      onChange(value.slice(0, -1));
    }
  }

  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
      </label>
      <p id={`${id}-hint`} className="text-xs text-ink-muted">
        {hint}
      </p>
      <div
        className={cn(
          'flex min-h-10 flex-wrap items-center gap-1.5 rounded-md border bg-paper px-2 py-1.5 focus-within:outline-2 focus-within:outline-offset-2 focus-within:outline-accent',
          shown ? 'border-2 border-danger' : 'border-line',
        )}
      >
        {value.length > 0 && (
          <ul className="contents" aria-label={`${label}: tags`}>
            {value.map((tag) => (
              <li key={tag} className="inline-flex items-center gap-1 rounded-sm border border-rule bg-paper-2 py-px pr-0.5 pl-1.5 text-sm">
                {tag}
                <button
                  type="button"
                  className="rounded-sm px-1 text-ink-muted hover:bg-paper-3 hover:text-ink"
                  aria-label={`Remove tag ${tag}`}
                  onClick={() => onChange(value.filter((t) => t !== tag))}
                >
                  ×
                </button>
              </li>
            ))}
          </ul>
        )}
        <input
          id={id}
          value={draft}
          onChange={(event) => {
            const next = event.target.value;
            if (next.endsWith(',')) add(next.slice(0, -1));
            else {
              setDraft(next);
              if (problem) setProblem(null);
            }
          }}
          onKeyDown={onKeyDown}
          onBlur={() => {
            add(draft);
            onBlur?.();
          }}
          aria-describedby={[`${id}-hint`, shown ? `${id}-error` : null].filter(Boolean).join(' ')}
          aria-invalid={shown ? true : undefined}
          autoComplete="off"
          className="h-7 min-w-16 flex-1 bg-transparent text-sm outline-none"
          placeholder={value.length === 0 ? 'Type, then Enter' : ''}
        />
      </div>
      {shown && (
        <p id={`${id}-error`} className="text-sm text-danger">
          {shown}
        </p>
      )}
    </div>
  );
}
