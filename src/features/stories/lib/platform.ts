import { useSyncExternalStore } from 'react';

/** True on Apple keyboards, where shortcuts use ⌘ rather than Ctrl. */
export function isApplePlatform(): boolean {
  if (typeof navigator === 'undefined') return false;
  const platform = (navigator as Navigator & { userAgentData?: { platform?: string } }).userAgentData?.platform ?? navigator.platform ?? '';
  return /mac|iphone|ipad|ipod/i.test(platform);
}

/** A shortcut as this keyboard writes it: "Ctrl+K" or "⌘K". */
export function shortcutLabel(key: string): string {
  return isApplePlatform() ? `⌘${key}` : `Ctrl+${key}`;
}

/** Ctrl on most keyboards, ⌘ on Apple ones (so Ctrl+B on a Mac is left to the system). */
export function hasShortcutModifier(event: { ctrlKey: boolean; metaKey: boolean; altKey: boolean }): boolean {
  if (event.altKey) return false;
  return isApplePlatform() ? event.metaKey : event.ctrlKey;
}

/** Follows a CSS media query, e.g. whether the screen is wide enough for a side-by-side preview. */
export function useMediaQuery(query: string): boolean {
  return useSyncExternalStore(
    (notify) => {
      const list = window.matchMedia(query);
      list.addEventListener('change', notify);
      return () => list.removeEventListener('change', notify);
    },
    () => window.matchMedia(query).matches,
    () => false,
  );
}
