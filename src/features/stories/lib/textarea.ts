import type { TextEdit } from './markdown-edit';

/**
 * Applies an edit to a textarea as if it were typed: `insertText` keeps the browser's undo
 * history (Ctrl+Z undoes a toolbar action); where a browser refuses it, `setRangeText` plus an
 * input event still reaches React's onChange.
 */
export function applyEdit(textarea: HTMLTextAreaElement, edit: TextEdit): void {
  textarea.focus();
  textarea.setSelectionRange(edit.from, edit.to);
  let done = false;
  if (edit.insert !== '' || edit.from !== edit.to) {
    try {
      // Deprecated but still the only way to change a textarea that keeps its undo stack.
      done = document.execCommand('insertText', false, edit.insert);
    } catch {
      done = false;
    }
  }
  if (!done || textarea.value.slice(edit.from, edit.from + edit.insert.length) !== edit.insert) {
    textarea.setRangeText(edit.insert, edit.from, edit.to, 'end');
    textarea.dispatchEvent(new Event('input', { bubbles: true }));
  }
  textarea.setSelectionRange(edit.selectFrom, edit.selectTo);
}

/**
 * Selects `[start, end)` and scrolls the textarea so it is in view. A textarea does not scroll
 * to a selection made by script, so the line's height is measured in an invisible copy with the
 * same width and type.
 */
export function revealRange(textarea: HTMLTextAreaElement, start: number, end: number): void {
  textarea.focus({ preventScroll: true });
  textarea.setSelectionRange(start, end);
  const style = window.getComputedStyle(textarea);
  const mirror = document.createElement('div');
  for (const prop of ['fontFamily', 'fontSize', 'fontWeight', 'lineHeight', 'letterSpacing', 'paddingTop', 'paddingLeft', 'paddingRight', 'borderLeftWidth', 'borderRightWidth', 'boxSizing', 'tabSize'] as const) {
    mirror.style[prop] = style[prop];
  }
  Object.assign(mirror.style, { position: 'absolute', visibility: 'hidden', whiteSpace: 'pre-wrap', overflowWrap: 'break-word', top: '0', left: '-9999px', width: `${textarea.clientWidth}px` });
  mirror.textContent = textarea.value.slice(0, start) || ' ';
  document.body.append(mirror);
  const top = mirror.scrollHeight;
  mirror.remove();
  const lineHeight = Number.parseFloat(style.lineHeight) || 24;
  textarea.scrollTop = Math.max(0, top - textarea.clientHeight / 3 - lineHeight);
  textarea.scrollIntoView({ block: 'nearest' });
}
