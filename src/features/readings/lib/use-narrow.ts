import { useMediaQuery } from '@/lib/use-media-query';

/** True while the window is narrower than Tailwind's `sm` breakpoint (40rem): a phone at the bench. */
export function useNarrowScreen(): boolean {
  return useMediaQuery('(max-width: 39.99rem)');
}
