/**
 * Text edits the editor's toolbar and shortcuts make to a Markdown body. Each returns the range
 * to replace, its replacement and the selection afterwards, so the textarea can apply it as one
 * typed change (undo keeps working) instead of resetting its whole value.
 */
export interface TextEdit {
  from: number;
  to: number;
  insert: string;
  selectFrom: number;
  selectTo: number;
}

/**
 * Wraps the selection in `mark` (`**` bold, `_` italic), or removes the mark when the selection
 * is already wrapped. With nothing selected, inserts the marks around `placeholder`, selected.
 */
export function toggleWrap(value: string, start: number, end: number, mark: string, placeholder: string): TextEdit {
  const selected = value.slice(start, end);
  const outside = value.slice(start - mark.length, start) === mark && value.slice(end, end + mark.length) === mark;
  if (selected && outside) {
    return { from: start - mark.length, to: end + mark.length, insert: selected, selectFrom: start - mark.length, selectTo: end - mark.length };
  }
  if (selected.length > 2 * mark.length && selected.startsWith(mark) && selected.endsWith(mark)) {
    const inner = selected.slice(mark.length, -mark.length);
    return { from: start, to: end, insert: inner, selectFrom: start, selectTo: start + inner.length };
  }
  // Markdown ignores marks that open or close on a space: keep spaces outside them.
  const text = selected || placeholder;
  const lead = text.length - text.trimStart().length;
  const trail = text.length - text.trimEnd().length;
  const core = text.trim() || placeholder;
  const insert = `${text.slice(0, lead)}${mark}${core}${mark}${text.slice(text.length - trail)}`;
  const coreFrom = start + lead + mark.length;
  return { from: start, to: end, insert, selectFrom: coreFrom, selectTo: coreFrom + core.length };
}

function lineStart(value: string, pos: number): number {
  return value.lastIndexOf('\n', pos - 1) + 1;
}

function lineEnd(value: string, pos: number): number {
  const next = value.indexOf('\n', pos);
  return next === -1 ? value.length : next;
}

/**
 * Puts `prefix` ("## ", "- ") at the start of every line the selection touches, or takes it off
 * when every one of them has it already. A heading replaces another heading level.
 */
export function togglePrefix(value: string, start: number, end: number, prefix: string): TextEdit {
  const from = lineStart(value, start);
  const to = lineEnd(value, end > start && value[end - 1] === '\n' ? end - 1 : end);
  const lines = value.slice(from, to).split('\n');
  const heading = /^#{1,6} /;
  const isHeading = heading.test(prefix);
  const all = lines.every((line) => line.startsWith(prefix));
  const changed = lines.map((line) => {
    if (all) return line.slice(prefix.length);
    if (line.startsWith(prefix)) return line;
    if (isHeading) return prefix + line.replace(heading, '');
    return line.trim() === '' && lines.length > 1 ? line : prefix + line;
  });
  const insert = changed.join('\n');
  if (lines.length === 1) {
    // One line: the cursor (or selection) stays on the same words.
    const delta = insert.length - (to - from);
    return { from, to, insert, selectFrom: Math.max(from, start + delta), selectTo: Math.max(from, end + delta) };
  }
  return { from, to, insert, selectFrom: from, selectTo: from + insert.length };
}

/**
 * Inserts `block` at `pos` on lines of its own, with a blank line before and after. The cursor
 * lands `caret` characters into the block (default: after it).
 */
export function insertBlock(value: string, pos: number, block: string, caret = block.length): TextEdit {
  const before = value.slice(0, pos);
  const after = value.slice(pos);
  const leading = before === '' ? '' : before.endsWith('\n\n') ? '' : before.endsWith('\n') ? '\n' : '\n\n';
  const trailing = after.startsWith('\n\n') ? '' : after.startsWith('\n') ? '\n' : '\n\n';
  const insert = `${leading}${block}${trailing}`;
  const at = pos + leading.length + Math.min(Math.max(0, caret), block.length);
  return { from: pos, to: pos, insert, selectFrom: at, selectTo: at };
}

/** `[selection](https://)` with the address selected for typing; with no selection, the link text is selected. */
export function insertLink(value: string, start: number, end: number): TextEdit {
  const text = value.slice(start, end);
  if (text) {
    const insert = `[${text}](https://)`;
    const urlFrom = start + text.length + 3;
    return { from: start, to: end, insert, selectFrom: urlFrom, selectTo: urlFrom + 'https://'.length };
  }
  const insert = '[link text](https://)';
  return { from: start, to: end, insert, selectFrom: start + 1, selectTo: start + 1 + 'link text'.length };
}

/** Characters that would end a claim's link text early if left unescaped. */
function escapeLinkText(text: string): string {
  return text.replace(/([[\]\\])/g, '\\$1');
}

/**
 * A claim: the selection (or `name`) as the link text of `kind:key`, e.g.
 * `[end float is now three thou](clearance:end-float-after)`. The cursor lands after it.
 */
export function insertClaim(value: string, start: number, end: number, target: { kind: string; key: string; name: string }): TextEdit {
  const selected = value.slice(start, end);
  const text = selected.trim() ? selected.trim() : target.name;
  const lead = selected.length - selected.trimStart().length;
  const trail = selected.trim() ? selected.length - selected.trimEnd().length : 0;
  const claim = `[${escapeLinkText(text)}](${target.kind}:${target.key})`;
  const insert = `${selected.slice(0, lead)}${claim}${trail ? selected.slice(selected.length - trail) : ''}`;
  const caret = start + lead + claim.length;
  return { from: start, to: end, insert, selectFrom: caret, selectTo: caret };
}

/** Text inserted at the cursor (an image's Markdown), with spaces around it when it would touch a word. */
export function insertInline(value: string, start: number, end: number, text: string): TextEdit {
  const before = value.slice(0, start);
  const after = value.slice(end);
  const pad = (edge: string | undefined) => (edge !== undefined && edge !== '' && !/\s/.test(edge) ? ' ' : '');
  const insert = `${pad(before.at(-1))}${text}${pad(after[0])}`;
  const caret = start + insert.length;
  return { from: start, to: end, insert, selectFrom: caret, selectTo: caret };
}

/**
 * A caution block: `:::caution <kind>`, an empty line for what applies to this step, `:::`. The
 * renderer itself shows the kind's title and standard text (shared/stories/cautions.ts), so the
 * block does not repeat them. `caret` is where the builder's own words go.
 */
export function cautionBlock(kind: string): { block: string; caret: number } {
  const head = `:::caution ${kind}\n`;
  return { block: `${head}\n:::`, caret: head.length };
}
