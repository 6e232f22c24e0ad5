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

/** Why `key` cannot be a shortcut (in words for the builder), or null when it can. */
export function shortcutKeyProblem(key: string, other?: string): string | null {
  const k = key.trim().toLowerCase();
  if (!k) return 'Type the key to use.';
  if ([...k].length !== 1 || !ONE_KEY.test(k)) return 'Use one letter or digit.';
  if (other !== undefined && k === other.trim().toLowerCase()) return 'The two shortcuts need different keys.';
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

function subscribe(onChange: () => void): () => void {
  listeners.add(onChange);
  // Another tab changed them.
  const onStorage = (event: StorageEvent) => {
    if (event.key === SHORTCUTS_STORAGE_KEY || event.key === null) onChange();
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

/** The player's shortcut settings for this browser, and a setter that stores them. */
export function usePlayerShortcuts(): [PlayerShortcuts, (next: PlayerShortcuts) => void] {
  const settings = useSyncExternalStore(subscribe, snapshot, () => defaultShortcuts);
  const set = useCallback((next: PlayerShortcuts) => saveShortcuts(next), []);
  return [settings, set];
}
