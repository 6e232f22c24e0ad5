import { useId, useRef, useState, type ClipboardEvent, type DragEvent, type KeyboardEvent, type ReactNode, type RefObject } from 'react';
import type { UseFormRegisterReturn } from 'react-hook-form';
import { cautionKinds, cautionTexts, type CautionKind } from '@shared/stories/cautions';
import { countWords } from '@shared/stories/story.schema';
import { Button } from '@/components/ui/button';
import { Menu, MenuContent, MenuItem, MenuTrigger } from '@/components/ui/menu';
import { Progress } from '@/components/ui/progress';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { imageRefusal, uploadStoryImage } from '../api/upload-story-image';
import { cautionBlock, insertBlock, insertInline, insertLink, toggleWrap, togglePrefix, type TextEdit } from '../lib/markdown-edit';
import { hasShortcutModifier, shortcutLabel } from '../lib/platform';
import { applyEdit } from '../lib/textarea';
import { ClaimMark } from './claim-evidence';

interface UploadItem {
  id: number;
  name: string;
  progress: number | null;
  error: string | null;
}

export interface BodyEditorProps {
  storyId: number;
  textareaRef: RefObject<HTMLTextAreaElement | null>;
  /** The body field from react-hook-form. */
  field: UseFormRegisterReturn<'body'>;
  body: string;
  error?: string;
  /** Opens the claim picker with the current selection. */
  onClaim: () => void;
}

let nextUploadId = 1;

/**
 * The Markdown body: a plain textarea (Tab moves on, as everywhere), a toolbar of labelled
 * buttons, Ctrl/⌘+B and I for bold and italic, images by dropping, pasting or picking, and the
 * word count.
 */
export function BodyEditor({ storyId, textareaRef, field, body, error, onClaim }: BodyEditorProps) {
  const id = useId();
  const fileInput = useRef<HTMLInputElement>(null);
  const [uploads, setUploads] = useState<UploadItem[]>([]);
  const [note, setNote] = useState<string | null>(null);
  const [dragging, setDragging] = useState(false);
  const cautionChosen = useRef(false);
  const words = countWords(body);

  function edit(make: (value: string, start: number, end: number) => TextEdit) {
    const textarea = textareaRef.current;
    if (!textarea) return;
    applyEdit(textarea, make(textarea.value, textarea.selectionStart, textarea.selectionEnd));
  }

  const bold = () => edit((v, s, e) => toggleWrap(v, s, e, '**', 'bold text'));
  const italic = () => edit((v, s, e) => toggleWrap(v, s, e, '_', 'italic text'));
  const heading = () => edit((v, s, e) => togglePrefix(v, s, e, '## '));
  const list = () => edit((v, s, e) => togglePrefix(v, s, e, '- '));
  const link = () => edit((v, s, e) => insertLink(v, s, e));
  const caution = (kind: CautionKind) => {
    const { block, caret } = cautionBlock(kind);
    edit((v, s) => insertBlock(v, s, block, caret));
    setNote(`Caution “${cautionTexts[kind].title}” added: the preview shows its standard text. Add what applies to this step on the empty line inside the block, or leave it as it is.`);
  };

  function onKeyDown(event: KeyboardEvent<HTMLTextAreaElement>) {
    if (!hasShortcutModifier(event) || event.shiftKey) return;
    const key = event.key.toLowerCase();
    if (key === 'b') {
      event.preventDefault();
      bold();
    } else if (key === 'i') {
      event.preventDefault();
      italic();
    }
  }

  function addFiles(files: File[]) {
    for (const file of files) {
      const refusal = imageRefusal(file);
      const item: UploadItem = { id: nextUploadId++, name: file.name, progress: refusal ? null : 0, error: refusal };
      setUploads((current) => [...current, item]);
      if (refusal) continue;
      const update = (patch: Partial<UploadItem>) => setUploads((current) => current.map((u) => (u.id === item.id ? { ...u, ...patch } : u)));
      uploadStoryImage(storyId, file, { onProgress: (progress) => update({ progress }) })
        .then((image) => {
          setUploads((current) => current.filter((u) => u.id !== item.id));
          const textarea = textareaRef.current;
          if (!textarea) return;
          const change = insertInline(textarea.value, textarea.selectionStart, textarea.selectionEnd, image.markdown);
          applyEdit(textarea, change);
          // An image without words is lost on readers who cannot see it: put the cursor where they go.
          const altAt = textarea.value.indexOf(`${image.markdown}`, change.from);
          if (image.alt === '' && image.markdown.startsWith('![]') && altAt >= 0) textarea.setSelectionRange(altAt + 2, altAt + 2);
          setNote(
            image.alt === ''
              ? `“${file.name}” added. Type what it shows between the square brackets, for readers who cannot see it.`
              : `“${file.name}” added.`,
          );
        })
        .catch((e: unknown) => update({ error: `“${file.name}” was not added: ${errorMessage(e)}`, progress: null }));
    }
  }

  function imagesIn(list: DataTransferItemList | FileList | null): File[] {
    if (!list) return [];
    const files: File[] = [];
    for (const entry of Array.from(list as ArrayLike<DataTransferItem | File>)) {
      const file = entry instanceof File ? entry : entry.kind === 'file' ? entry.getAsFile() : null;
      if (file) files.push(file);
    }
    return files;
  }

  function onDrop(event: DragEvent<HTMLTextAreaElement>) {
    setDragging(false);
    const files = imagesIn(event.dataTransfer.files);
    if (files.length === 0) return;
    event.preventDefault();
    addFiles(files);
  }

  function onPaste(event: ClipboardEvent<HTMLTextAreaElement>) {
    const files = imagesIn(event.clipboardData.files);
    if (files.length === 0) return;
    event.preventDefault();
    addFiles(files);
  }

  const { ref: registerRef, ...fieldProps } = field;

  return (
    <div className="flex flex-col gap-1.5">
      <div className="flex flex-wrap items-end justify-between gap-2">
        <label htmlFor={id} className="text-sm font-medium text-ink">
          Text <span className="font-normal text-ink-muted">(Markdown)</span>
        </label>
        <p className="figures text-xs text-ink-muted" aria-live="off">
          {words} {words === 1 ? 'word' : 'words'}
        </p>
      </div>

      <div role="group" aria-label="Formatting" className="flex flex-wrap gap-1 rounded-t-md border border-b-0 border-line bg-paper-2/70 p-1" data-print="hide">
        <ToolButton onClick={bold} shortcut="B" label="Bold">
          <b>B</b>
          <span className="sr-only sm:not-sr-only">Bold</span>
        </ToolButton>
        <ToolButton onClick={italic} shortcut="I" label="Italic">
          <i className="font-serif">I</i>
          <span className="sr-only sm:not-sr-only">Italic</span>
        </ToolButton>
        <ToolButton onClick={heading} label="Heading">
          <span aria-hidden="true" className="figures">
            ##
          </span>
          <span className="sr-only sm:not-sr-only">Heading</span>
        </ToolButton>
        <ToolButton onClick={list} label="List">
          <span aria-hidden="true">•</span>
          <span className="sr-only sm:not-sr-only">List</span>
        </ToolButton>
        <ToolButton onClick={link} label="Link">
          <span aria-hidden="true">↗</span>
          <span className="sr-only sm:not-sr-only">Link</span>
        </ToolButton>
        <ToolButton onClick={onClaim} shortcut="K" label="Claim" emphasis>
          <ClaimMark className="size-3.5 shrink-0" />
          Claim
          <kbd className="figures rounded-sm border border-rule bg-paper px-1 text-2xs text-ink-muted">{shortcutLabel('K')}</kbd>
        </ToolButton>
        <ToolButton onClick={() => fileInput.current?.click()} label="Image">
          <span aria-hidden="true">▣</span>
          Image
        </ToolButton>
        <Menu>
          <MenuTrigger asChild>
            <Button size="sm" variant="quiet" className="h-8 px-2">
              <span aria-hidden="true">⚠</span>
              Caution
              <span aria-hidden="true" className="text-xs">
                ▾
              </span>
            </Button>
          </MenuTrigger>
          <MenuContent
            align="start"
            onCloseAutoFocus={(event) => {
              // After inserting, typing continues in the text, not on the menu button.
              if (cautionChosen.current) {
                event.preventDefault();
                cautionChosen.current = false;
                textareaRef.current?.focus();
              }
            }}
          >
            {cautionKinds.map((kind) => (
              <MenuItem
                key={kind}
                onSelect={() => {
                  cautionChosen.current = true;
                  caution(kind);
                }}
              >
                {cautionTexts[kind].title}
              </MenuItem>
            ))}
          </MenuContent>
        </Menu>
        <input
          ref={fileInput}
          type="file"
          accept="image/jpeg,image/png,image/webp"
          multiple
          className="sr-only"
          tabIndex={-1}
          aria-label="Image files to add"
          onChange={(event) => {
            addFiles(imagesIn(event.target.files));
            event.target.value = '';
          }}
        />
      </div>

      <textarea
        id={id}
        {...fieldProps}
        ref={(element) => {
          registerRef(element);
          textareaRef.current = element;
        }}
        rows={20}
        spellCheck
        onKeyDown={onKeyDown}
        onDrop={onDrop}
        onPaste={onPaste}
        onDragOver={(event) => {
          if (Array.from(event.dataTransfer.types).includes('Files')) {
            event.preventDefault();
            setDragging(true);
          }
        }}
        onDragLeave={() => setDragging(false)}
        aria-describedby={`${id}-hint${error ? ` ${id}-error` : ''}`}
        aria-invalid={error ? true : undefined}
        className={cn(
          '-mt-1.5 min-h-72 w-full resize-y rounded-b-md border bg-paper px-3 py-2 font-mono text-sm leading-relaxed text-ink',
          error ? 'border-2 border-danger' : 'border-line',
          dragging && 'border-2 border-dashed border-accent bg-accent-wash/40',
        )}
      />
      <p id={`${id}-hint`} className="text-xs text-ink-muted">
        {shortcutLabel('B')} bold · {shortcutLabel('I')} italic · {shortcutLabel('K')} claim · drop or paste JPEG, PNG or WebP images · Tab leaves the text box
      </p>
      {error && (
        <p id={`${id}-error`} className="text-sm text-danger">
          {error}
        </p>
      )}

      {(uploads.length > 0 || note) && (
        <ul aria-label="Images being added" aria-live="polite" className="flex flex-col gap-1.5">
          {uploads.map((u) =>
            u.error ? (
              <li key={u.id} role="alert" className="flex items-start justify-between gap-2 rounded-md border border-danger/50 bg-danger-wash/50 px-2.5 py-1.5 text-sm">
                <span>{u.error}</span>
                <button type="button" className="text-xs text-ink-muted underline" onClick={() => setUploads((c) => c.filter((x) => x.id !== u.id))}>
                  Dismiss<span className="sr-only"> message about {u.name}</span>
                </button>
              </li>
            ) : (
              <li key={u.id} className="text-sm">
                <Progress value={u.progress === null ? null : u.progress * 100} label={`Upload of ${u.name}`} size="sm">
                  {u.name} · {u.progress === null ? 'sending' : `${Math.round(u.progress * 100)} %`}
                </Progress>
              </li>
            ),
          )}
          {note && (
            <li className="flex items-start justify-between gap-2 text-sm text-ink-muted">
              <span>{note}</span>
              <button type="button" className="text-xs underline" onClick={() => setNote(null)}>
                Dismiss
              </button>
            </li>
          )}
        </ul>
      )}
    </div>
  );
}

function ToolButton({ onClick, shortcut, label, emphasis, children }: { onClick: () => void; shortcut?: string; label: string; emphasis?: boolean; children: ReactNode }) {
  const keys = shortcut ? (shortcutLabel(shortcut).startsWith('⌘') ? `Meta+${shortcut}` : `Control+${shortcut}`) : undefined;
  return (
    <Button
      size="sm"
      variant={emphasis ? 'secondary' : 'quiet'}
      className={cn('h-8 px-2', emphasis && 'border-accent/50 text-accent-strong')}
      onClick={onClick}
      // Keep the text's selection: a toolbar press must not move focus before the edit reads it.
      onMouseDown={(event) => event.preventDefault()}
      title={shortcut ? `${label} (${shortcutLabel(shortcut)})` : label}
      aria-label={shortcut ? `${label} (${shortcutLabel(shortcut)})` : label}
      aria-keyshortcuts={keys}
    >
      {children}
    </Button>
  );
}
