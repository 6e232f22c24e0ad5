import { useSyncExternalStore } from 'react';

/** True while the window is narrower than Tailwind's `sm` breakpoint (40rem): a phone at the bench. */
export function useNarrowScreen(): boolean {
  return useSyncExternalStore(
    (onChange) => {
      const list = window.matchMedia(QUERY);
      list.addEventListener('change', onChange);
      return () => list.removeEventListener('change', onChange);
    },
    () => window.matchMedia(QUERY).matches,
    () => false,
  );
}

const QUERY = '(max-width: 39.99rem)';
