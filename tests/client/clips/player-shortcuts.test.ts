import { describe, expect, it } from 'vitest';
import type { Clip } from '@shared/clips/clip.schema';
import { defaultShortcuts, isShortcut, keyLabel, parseShortcuts, shortcutKeyProblem } from '@/features/clips/lib/player-shortcuts';
import { readyUploadedClips } from '@/features/clips/lib/ready-uploads';

const press = (key: string, mods: Partial<{ ctrlKey: boolean; altKey: boolean; metaKey: boolean }> = {}) => ({
  key,
  ctrlKey: false,
  altKey: false,
  metaKey: false,
  ...mods,
});

describe('the player shortcut settings kept in the browser', () => {
  it('are M and R, on, when nothing or something unreadable is stored', () => {
    expect(parseShortcuts(null)).toEqual({ enabled: true, mark: 'm', reading: 'r' });
    expect(parseShortcuts('not json')).toEqual(defaultShortcuts);
    expect(parseShortcuts('[1,2]')).toEqual(defaultShortcuts);
  });

  it('keep a builder’s choice, lower-cased, and fall back key by key when one is not a single letter or digit', () => {
    expect(parseShortcuts(JSON.stringify({ enabled: false, mark: 'K', reading: '7' }))).toEqual({ enabled: false, mark: 'k', reading: '7' });
    expect(parseShortcuts(JSON.stringify({ enabled: true, mark: 'ctrl+k', reading: 'ь' }))).toEqual({ enabled: true, mark: 'm', reading: 'ь' });
  });

  it('never put both actions on one key', () => {
    expect(parseShortcuts(JSON.stringify({ enabled: true, mark: 'x', reading: 'X' }))).toEqual({ enabled: true, mark: 'm', reading: 'r' });
  });

  it('refuse an empty key, two keys, a space or a symbol, and the same key twice, in words', () => {
    expect(shortcutKeyProblem('')).toBe('Type the key to use.');
    expect(shortcutKeyProblem('mk')).toBe('Use one letter or digit.');
    expect(shortcutKeyProblem('/')).toBe('Use one letter or digit.');
    expect(shortcutKeyProblem('k', 'K')).toBe('The two shortcuts need different keys.');
    expect(shortcutKeyProblem('k', 'm')).toBeNull();
  });

  it('match the plain key or its capital, never with Ctrl, Alt or Meta held', () => {
    expect(isShortcut(press('m'), 'm')).toBe(true);
    expect(isShortcut(press('M'), 'm')).toBe(true);
    expect(isShortcut(press('m', { ctrlKey: true }), 'm')).toBe(false);
    expect(isShortcut(press('m', { altKey: true }), 'm')).toBe(false);
    expect(isShortcut(press('m', { metaKey: true }), 'm')).toBe(false);
    expect(isShortcut(press('r'), 'm')).toBe(false);
    expect(keyLabel('k')).toBe('K');
  });
});

describe('clips that uploads from this page became', () => {
  const clip = (id: number, status: Clip['status']) => ({ id, status, videoUrl: status === 'ready' ? `/api/clips/${id}/video` : null }) as Clip;

  it('are offered once each when ready, in the order the files were chosen', () => {
    const uploads = [
      { state: 'sent', clipId: 3 },
      { state: 'uploading', clipId: null },
      { state: 'sent', clipId: 5 },
      { state: 'sent', clipId: 4 },
    ];
    const clips = [clip(3, 'ready'), clip(4, 'processing'), clip(5, 'ready')];
    expect(readyUploadedClips(uploads, clips, new Set()).map((c) => c.id)).toEqual([3, 5]);
    expect(readyUploadedClips(uploads, clips, new Set([3])).map((c) => c.id)).toEqual([5]);
    expect(readyUploadedClips(uploads, undefined, new Set())).toEqual([]);
  });
});
