/**
 * Search snippets: plain text in which the server marks each match between two private-use
 * characters (stripped from the stored text first, so a story cannot forge one). No zod here: the
 * home page, which shows them, is a reader's first load.
 */

/** Starts a match in `snippet` (U+E000). */
export const SNIPPET_MARK_START = '\uE000';
/** Ends a match in `snippet` (U+E001). */
export const SNIPPET_MARK_END = '\uE001';

/** A run of a snippet's text, marked when it matched the search. */
export interface SnippetPart {
  text: string;
  marked: boolean;
}

/**
 * A snippet as runs of text, marked runs joined when they touch or only spaces part them (`VP`
 * and `-0417`, `end` and `float` are marked apart), stray markers dropped; a mark left open runs
 * to the end.
 */
export function snippetParts(snippet: string): SnippetPart[] {
  const parts: SnippetPart[] = [];
  let marked = false;
  let text = '';
  const flush = () => {
    if (text === '') return;
    const last = parts[parts.length - 1];
    if (last && last.marked === marked) last.text += text;
    else parts.push({ text, marked });
    text = '';
  };
  for (const ch of snippet) {
    if (ch === SNIPPET_MARK_START || ch === SNIPPET_MARK_END) {
      const next = ch === SNIPPET_MARK_START;
      if (next !== marked) {
        flush();
        marked = next;
      }
      continue;
    }
    text += ch;
  }
  flush();
  // "End" and "float" of a phrase are marked one by one: the space between them goes with them.
  const joined: SnippetPart[] = [];
  for (let i = 0; i < parts.length; i += 1) {
    const part = parts[i]!;
    const prev = joined[joined.length - 1];
    const next = parts[i + 1];
    if (!part.marked && prev?.marked && next?.marked && part.text.trim() === '') {
      prev.text += part.text + next.text;
      i += 1;
    } else if (part.marked && prev?.marked) prev.text += part.text;
    else joined.push({ ...part });
  }
  return joined;
}
