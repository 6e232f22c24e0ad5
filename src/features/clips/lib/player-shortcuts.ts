import { useCallback, useSyncExternalStore } from 'react';

/** The player's single-key shortcuts: on or off, and the key for each. Keys are stored lower-case. */
export interface PlayerShortcuts {
  enabled: boolean;
  /** Marks a moment at the current time. */
  mark: string;
  /** Opens the reading form at the current time. */
  reading: string;
}

export const defaultShortcuts: PlayerShortcuts = Object.freeze({ enabled: true, mark: 'm', reading: 'r' });

/** Where the choice is kept, per browser (it is a matter of the builder's keyboard, not of a build). */
export const SHORTCUTS_STORAGE_KEY = 'benchproof.player-shortcuts';

// One letter or digit of any script: a builder on a Cyrillic or Greek layout can pick the key their
// keyboard actually sends. Space, punctuation and symbols are left to the browser and our own keys.
const ONE_KEY = /^[\p{L}\p{N}]$/u;

/**
 * Why `key` cannot be a shortcut (in words for the builder), or null when it can; `other` is the
 * key (or keys) already given to other shortcuts.
 */
export function shortcutKeyProblem(key: string, other?: string | readonly string[]): string | null {
  const k = key.trim().toLowerCase();
  if (!k) return 'Type the key to use.';
  if ([...k].length !== 1 || !ONE_KEY.test(k)) return 'Use one letter or digit.';
  const others = other === undefined ? [] : typeof other === 'string' ? [other] : other;
  if (others.some((o) => k === o.trim().toLowerCase())) return 'The two shortcuts need different keys.';
  return null;
}

/** The stored text as settings; anything missing, unreadable or invalid falls back to the defaults. */
export function parseShortcuts(text: string | null): PlayerShortcuts {
  if (!text) return defaultShortcuts;
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch {
    return defaultShortcuts;
  }
  if (!raw || typeof raw !== 'object') return defaultShortcuts;
  const { enabled, mark, reading } = raw as Record<string, unknown>;
  const keyOr = (value: unknown, fallback: string) =>
    typeof value === 'string' && shortcutKeyProblem(value) === null ? value.toLowerCase() : fallback;
  const parsed = {
    enabled: typeof enabled === 'boolean' ? enabled : defaultShortcuts.enabled,
    mark: keyOr(mark, defaultShortcuts.mark),
    reading: keyOr(reading, defaultShortcuts.reading),
  };
  // Two actions on one key would make one of them unreachable.
  if (parsed.mark === parsed.reading) return { ...parsed, mark: defaultShortcuts.mark, reading: defaultShortcuts.reading };
  return parsed;
}

/** The key as printed on a key cap: upper-case. */
export function keyLabel(key: string): string {
  return key.toUpperCase();
}

/** True when a keydown is the plain press of `key` (no Ctrl, Alt or Meta; Shift allowed for capitals). */
export function isShortcut(event: { key: string; ctrlKey: boolean; altKey: boolean; metaKey: boolean }, key: string): boolean {
  if (event.ctrlKey || event.altKey || event.metaKey) return false;
  return event.key.toLowerCase() === key;
}

/**
 * The keys of the "Heard on this clip" list, which work while the list has focus: accept the
 * selected proposal (opens the reading form filled in), dismiss it, undo the last dismissal.
 * They follow the player's `enabled` switch; Enter and Delete (not character keys) and the
 * arrows stay on, as Space and the arrows do on the picture.
 */
export interface HeardShortcuts {
  accept: string;
  dismiss: string;
  undo: string;
}

export const defaultHeardShortcuts: HeardShortcuts = Object.freeze({ accept: 'a', dismiss: 'd', undo: 'u' });

/** Where the list's keys are kept, per browser, beside the player's. */
export const HEARD_SHORTCUTS_STORAGE_KEY = 'benchproof.heard-shortcuts';

/**
 * The stored text as the list's keys; anything missing or invalid falls back to its default, and
 * a key that repeats another of the list's (or the player's mark and reading keys) brings all three
 * back to A, D and U.
 */
export function parseHeardShortcuts(text: string | null, player: Pick<PlayerShortcuts, 'mark' | 'reading'> = defaultShortcuts): HeardShortcuts {
  let raw: unknown;
  try {
    raw = text ? JSON.parse(text) : null;
  } catch {
    raw = null;
  }
  const stored = raw && typeof raw === 'object' ? (raw as Record<string, unknown>) : {};
  const keyOr = (value: unknown, fallback: string) =>
    typeof value === 'string' && shortcutKeyProblem(value) === null ? value.toLowerCase() : fallback;
  const parsed = {
    accept: keyOr(stored.accept, defaultHeardShortcuts.accept),
    dismiss: keyOr(stored.dismiss, defaultHeardShortcuts.dismiss),
    undo: keyOr(stored.undo, defaultHeardShortcuts.undo),
  };
  const keys = [parsed.accept, parsed.dismiss, parsed.undo, player.mark, player.reading];
  return new Set(keys).size === keys.length ? parsed : defaultHeardShortcuts;
}

const listeners = new Set<() => void>();
let cachedText: string | null | undefined;
let cached: PlayerShortcuts = defaultShortcuts;
// Settings the browser would not store (private mode, storage blocked or full): they hold for this page.
let unstored: string | null = null;

function readStored(): string | null {
  if (unstored !== null) return unstored;
  try {
    return window.localStorage.getItem(SHORTCUTS_STORAGE_KEY);
  } catch {
    return null;
  }
}

function snapshot(): PlayerShortcuts {
  const text = readStored();
  if (text !== cachedText) {
    cachedText = text;
    cached = parseShortcuts(text);
  }
  return cached;
}

let heardUnstored: string | null = null;
let heardCachedText: string | null | undefined;
let heardCachedPlayer: PlayerShortcuts | undefined;
let heardCached: HeardShortcuts = defaultHeardShortcuts;

function heardSnapshot(): HeardShortcuts {
  let text: string | null = heardUnstored;
  if (text === null) {
    try {
      text = window.localStorage.getItem(HEARD_SHORTCUTS_STORAGE_KEY);
    } catch {
      text = null;
    }
  }
  const player = snapshot();
  if (text !== heardCachedText || player !== heardCachedPlayer) {
    heardCachedText = text;
    heardCachedPlayer = player;
    heardCached = parseHeardShortcuts(text, player);
  }
  return heardCached;
}

function subscribe(onChange: () => void): () => void {
  listeners.add(onChange);
  // Another tab changed them.
  const onStorage = (event: StorageEvent) => {
    if (event.key === SHORTCUTS_STORAGE_KEY || event.key === HEARD_SHORTCUTS_STORAGE_KEY || event.key === null) onChange();
  };
  window.addEventListener('storage', onStorage);
  return () => {
    listeners.delete(onChange);
    window.removeEventListener('storage', onStorage);
  };
}

/** Stores the settings for this browser and tells every player on the page. */
export function saveShortcuts(next: PlayerShortcuts): void {
  const text = JSON.stringify({ enabled: next.enabled, mark: next.mark.toLowerCase(), reading: next.reading.toLowerCase() });
  try {
    window.localStorage.setItem(SHORTCUTS_STORAGE_KEY, text);
    unstored = null;
  } catch {
    unstored = text;
  }
  for (const listener of listeners) listener();
}

/** Stores the "Heard on this clip" list's keys for this browser and tells every list on the page. */
export function saveHeardShortcuts(next: HeardShortcuts): void {
  const text = JSON.stringify({ accept: next.accept.toLowerCase(), dismiss: next.dismiss.toLowerCase(), undo: next.undo.toLowerCase() });
  try {
    window.localStorage.setItem(HEARD_SHORTCUTS_STORAGE_KEY, text);
    heardUnstored = null;
  } catch {
    heardUnstored = text;
  }
  for (const listener of listeners) listener();
}

/** The "Heard on this clip" list's keys for this browser (on or off with the player's), and a setter that stores them. */
export function useHeardShortcuts(): [HeardShortcuts, (next: HeardShortcuts) => void] {
  const settings = useSyncExternalStore(subscribe, heardSnapshot, () => defaultHeardShortcuts);
  const set = useCallback((next: HeardShortcuts) => saveHeardShortcuts(next), []);
  return [settings, set];
}

/** The player's shortcut settings for this browser, and a setter that stores them. */
export function usePlayerShortcuts(): [PlayerShortcuts, (next: PlayerShortcuts) => void] {
  const settings = useSyncExternalStore(subscribe, snapshot, () => defaultShortcuts);
  const set = useCallback((next: PlayerShortcuts) => saveShortcuts(next), []);
  return [settings, set];
}
