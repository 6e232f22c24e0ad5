import { useCallback, useEffect, useRef, useState } from 'react';
import type { ErrorDetail } from '@shared/http/error.schema';
import type { Story, StoryPatch } from '@shared/stories/story.schema';
import { ApiError, clientErrorCodes, errorMessage } from '@/lib/api';
import { fetchStoredStory, patchStory } from '../api/story-mutations';
import { clearLocalDraft, writeLocalDraft } from './local-draft';
import { changedFields, fieldsOf, storyFieldsSchema, type StoryFields, type StoryFieldsInput } from './story-fields';

/** Quiet time after the last keystroke before saving. */
export const AUTOSAVE_DELAY_MS = 1500;
/** How often to try again while offline or after the server failed. */
const RETRY_MS = 15_000;
/** The local copy is written at most this often while typing. */
const LOCAL_COPY_MS = 300;

/** Where the editor's text stands against the server. */
export type SaveState =
  | { kind: 'saved'; at: string }
  | { kind: 'unsaved' }
  | { kind: 'saving' }
  | { kind: 'offline' }
  | { kind: 'conflict'; message: string }
  | { kind: 'invalid'; message: string }
  | { kind: 'failed'; message: string };

export interface AutosaveOptions {
  storyId: number;
  initial: Story;
  /** The form's current values. */
  getValues: () => StoryFieldsInput;
  /** A save went through: the stored entry as the server now has it. */
  onSaved: (story: Story) => void;
  /** The values do not pass the schema, or the server named fields it refused: show them beside the fields. */
  onInvalid: (details: ErrorDetail[]) => void;
}

/**
 * Saves an entry ~1.5 s after typing stops and when a field loses focus, sending only the
 * fields that changed with the `lockVersion` last loaded or saved. A 409 `edit_conflict` stops
 * autosaving until the builder chooses; nothing is ever overwritten without that choice. The
 * unsaved text is copied to this browser's storage all along.
 */
export function useStoryAutosave({ storyId, initial, getValues, onSaved, onInvalid }: AutosaveOptions) {
  const [state, setStateValue] = useState<SaveState>({ kind: 'saved', at: initial.updatedAt });
  const stateRef = useRef(state);
  const lockRef = useRef(initial.lockVersion);
  const savedRef = useRef<StoryFields>(fieldsOf(initial));
  const inFlight = useRef(false);
  const again = useRef(false);
  const saveTimer = useRef<number | undefined>(undefined);
  const retryTimer = useRef<number | undefined>(undefined);
  const copyTimer = useRef<number | undefined>(undefined);
  // Keep the latest callbacks without re-creating save() on every render.
  const callbacks = useRef({ getValues, onSaved, onInvalid });
  callbacks.current = { getValues, onSaved, onInvalid };

  const setState = useCallback((next: SaveState) => {
    stateRef.current = next;
    setStateValue(next);
  }, []);

  const keepLocalCopy = useCallback(() => {
    window.clearTimeout(copyTimer.current);
    const parsed = storyFieldsSchema.safeParse(callbacks.current.getValues());
    const values = parsed.success ? parsed.data : asFields(callbacks.current.getValues());
    if (changedFields(values, savedRef.current).length === 0) clearLocalDraft(storyId);
    else writeLocalDraft(storyId, lockRef.current, asFields(callbacks.current.getValues()));
  }, [storyId]);

  const save = useCallback(async (): Promise<boolean> => {
    window.clearTimeout(saveTimer.current);
    window.clearTimeout(retryTimer.current);
    if (stateRef.current.kind === 'conflict') return false;
    if (inFlight.current) {
      again.current = true;
      return false;
    }
    const current = callbacks.current.getValues();
    const dirtyFields = changedFields(current, savedRef.current);
    if (dirtyFields.length === 0) {
      clearLocalDraft(storyId);
      if (stateRef.current.kind !== 'saved') setState({ kind: 'saved', at: new Date().toISOString() });
      return true;
    }
    const parsed = storyFieldsSchema.safeParse(current);
    if (!parsed.success) {
      callbacks.current.onInvalid(parsed.error.issues.map((issue) => ({ path: issue.path.join('.'), message: issue.message })));
      setState({ kind: 'invalid', message: 'Not saved: fix the marked field. Your text is kept on this device.' });
      keepLocalCopy();
      return false;
    }
    if (typeof navigator !== 'undefined' && navigator.onLine === false) {
      setState({ kind: 'offline' });
      keepLocalCopy();
      retryTimer.current = window.setTimeout(() => void save(), RETRY_MS);
      return false;
    }

    const patch: StoryPatch = { lockVersion: lockRef.current };
    for (const name of dirtyFields) Object.assign(patch, { [name]: parsed.data[name] });
    const sent = asFields(current);
    inFlight.current = true;
    setState({ kind: 'saving' });
    try {
      const story = await patchStory(storyId, patch);
      lockRef.current = story.lockVersion;
      savedRef.current = sent;
      callbacks.current.onSaved(story);
      if (changedFields(callbacks.current.getValues(), sent).length === 0) {
        clearLocalDraft(storyId);
        setState({ kind: 'saved', at: story.updatedAt });
      } else {
        setState({ kind: 'unsaved' });
        again.current = true;
      }
      return true;
    } catch (error) {
      keepLocalCopy();
      if (error instanceof ApiError && error.code === 'edit_conflict') {
        setState({ kind: 'conflict', message: error.message });
      } else if (error instanceof ApiError && error.code === clientErrorCodes.network) {
        setState({ kind: 'offline' });
        retryTimer.current = window.setTimeout(() => void save(), RETRY_MS);
      } else if (error instanceof ApiError && error.status === 400 && error.details.some((d) => d.path)) {
        callbacks.current.onInvalid(error.details);
        setState({ kind: 'invalid', message: `Not saved: ${error.message} Fix the marked field; your text is kept on this device.` });
      } else {
        setState({ kind: 'failed', message: errorMessage(error) });
        retryTimer.current = window.setTimeout(() => void save(), RETRY_MS);
      }
      again.current = false;
      return false;
    } finally {
      inFlight.current = false;
      if (again.current) {
        again.current = false;
        saveTimer.current = window.setTimeout(() => void save(), 0);
      }
    }
  }, [keepLocalCopy, setState, storyId]);

  /** Call after every change in the form. */
  const changed = useCallback(() => {
    window.clearTimeout(copyTimer.current);
    copyTimer.current = window.setTimeout(keepLocalCopy, LOCAL_COPY_MS);
    const kind = stateRef.current.kind;
    if (kind === 'conflict') return;
    if (kind !== 'saving' && kind !== 'offline') setState({ kind: 'unsaved' });
    window.clearTimeout(saveTimer.current);
    saveTimer.current = window.setTimeout(() => void save(), AUTOSAVE_DELAY_MS);
  }, [keepLocalCopy, save, setState]);

  /**
   * After a conflict: keep this tab's text and save it over the stored version. The stored
   * version's lockVersion is read first, so the save is a deliberate new version, not a race.
   */
  const keepMine = useCallback(async () => {
    const stored = await fetchStoredStory(storyId);
    lockRef.current = stored.lockVersion;
    savedRef.current = fieldsOf(stored);
    setState({ kind: 'unsaved' });
    return save();
  }, [save, setState, storyId]);

  /** After a conflict: the builder chose the stored version; the form is reset to it by the caller. */
  const takeStored = useCallback(
    (stored: Story) => {
      lockRef.current = stored.lockVersion;
      savedRef.current = fieldsOf(stored);
      clearLocalDraft(storyId);
      setState({ kind: 'saved', at: stored.updatedAt });
    },
    [setState, storyId],
  );

  // Back online: save what waited.
  useEffect(() => {
    const online = () => {
      if (stateRef.current.kind === 'offline') void save();
    };
    window.addEventListener('online', online);
    return () => window.removeEventListener('online', online);
  }, [save]);

  // Closing the tab with unsaved text: keep the local copy and ask the browser to warn.
  useEffect(() => {
    const beforeUnload = (event: BeforeUnloadEvent) => {
      if (stateRef.current.kind === 'saved') return;
      keepLocalCopy();
      event.preventDefault();
    };
    const pageHide = () => {
      if (stateRef.current.kind !== 'saved') keepLocalCopy();
    };
    window.addEventListener('beforeunload', beforeUnload);
    window.addEventListener('pagehide', pageHide);
    return () => {
      window.removeEventListener('beforeunload', beforeUnload);
      window.removeEventListener('pagehide', pageHide);
    };
  }, [keepLocalCopy]);

  useEffect(
    () => () => {
      window.clearTimeout(saveTimer.current);
      window.clearTimeout(retryTimer.current);
      window.clearTimeout(copyTimer.current);
    },
    [],
  );

  return {
    state,
    /** Save now if anything changed (on blur, before keeping a revision). Resolves true when the server has the text. */
    flush: save,
    changed,
    keepMine,
    takeStored,
    /** The version this tab last loaded or saved. */
    lockVersion: () => lockRef.current,
    /** Values as last stored. */
    storedValues: () => savedRef.current,
  };
}

function asFields(values: StoryFieldsInput): StoryFields {
  return {
    title: values.title,
    summary: values.summary,
    workDate: values.workDate,
    tags: { machine: values.tags.machine ?? [], component: values.tags.component ?? [], operation: values.tags.operation ?? [] },
    coverMomentId: values.coverMomentId,
    body: values.body,
  };
}
