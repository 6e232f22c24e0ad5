import { Toast as RadixToast } from 'radix-ui';
import { cn } from '@/lib/cn';
import type { ToastItem, ToastTone, ToastViewportProps } from './toast';

// Loaded by `ToastProvider` with the first toast (see toast.tsx).

const DEFAULT_DURATION = 5000;
const toneWord: Record<ToastTone, string> = { info: 'Note', success: 'Done', error: 'Problem' };

export function ToastViewport({ items, onClose }: ToastViewportProps) {
  return (
    <RadixToast.Provider swipeDirection="right" label="Notifications">
      {items.map((item) => (
        <ToastCard key={item.id} item={item} onClose={() => onClose(item.id)} />
      ))}
      <RadixToast.Viewport
        data-print="hide"
        className="fixed right-0 bottom-0 z-50 m-0 flex w-full max-w-sm list-none flex-col gap-2 p-4 outline-none"
      />
    </RadixToast.Provider>
  );
}

function ToastCard({ item, onClose }: { item: ToastItem; onClose: () => void }) {
  const tone = item.tone ?? 'info';
  return (
    <RadixToast.Root
      open={item.open}
      onOpenChange={(open) => !open && onClose()}
      duration={item.duration ?? (tone === 'error' ? DEFAULT_DURATION * 2 : DEFAULT_DURATION)}
      // Errors interrupt the screen reader; confirmations wait their turn.
      type={tone === 'error' ? 'foreground' : 'background'}
      className={cn(
        'grid grid-cols-[auto_1fr_auto] items-start gap-x-3 rounded-md border bg-paper p-3 shadow-raised',
        'data-[state=closed]:opacity-0 data-[swipe=end]:translate-x-full data-[swipe=move]:translate-x-(--radix-toast-swipe-move-x) transition',
        tone === 'error' ? 'border-danger border-l-4' : 'border-line border-l-4 border-l-ink',
      )}
    >
      <ToneIcon tone={tone} />
      <div className="min-w-0">
        <RadixToast.Title className="text-sm font-semibold text-ink">
          <span className="sr-only">{toneWord[tone]}: </span>
          {item.title}
        </RadixToast.Title>
        {item.description && (
          <RadixToast.Description className="mt-0.5 text-sm text-ink-muted">{item.description}</RadixToast.Description>
        )}
      </div>
      <RadixToast.Close
        className="-m-1 rounded-sm p-1 text-ink-muted hover:bg-paper-2 hover:text-ink"
        aria-label="Dismiss notification"
      >
        <svg viewBox="0 0 16 16" className="size-4" aria-hidden="true">
          <path d="M4 4l8 8M12 4l-8 8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
        </svg>
      </RadixToast.Close>
    </RadixToast.Root>
  );
}

function ToneIcon({ tone }: { tone: ToastTone }) {
  const className = cn('mt-0.5 size-4', tone === 'error' ? 'text-danger' : 'text-ink');
  if (tone === 'success') {
    return (
      <svg viewBox="0 0 16 16" className={className} aria-hidden="true">
        <path d="M3 8.5l3.2 3L13 4.5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
    );
  }
  if (tone === 'error') {
    return (
      <svg viewBox="0 0 16 16" className={className} aria-hidden="true">
        <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
        <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
      </svg>
    );
  }
  return (
    <svg viewBox="0 0 16 16" className={className} aria-hidden="true">
      <circle cx="8" cy="8" r="6.25" fill="none" stroke="currentColor" strokeWidth="1.5" />
      <path d="M8 7.2v4M8 4.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
    </svg>
  );
}

