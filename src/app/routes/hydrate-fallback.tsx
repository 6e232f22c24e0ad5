import { LoadingState } from '@/components/ui/data-states';
import { Wordmark } from '../layout/wordmark';

/** What shows while the first page's code and data load. */
export function HydrateFallback() {
  return (
    <div className="mx-auto max-w-page px-4 py-6">
      <Wordmark />
      <LoadingState className="mt-8" label="Opening Benchproof…" />
    </div>
  );
}
