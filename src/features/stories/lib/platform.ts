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
