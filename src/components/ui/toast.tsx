import { createContext, lazy, Suspense, useCallback, useContext, useMemo, useState, type ReactNode } from 'react';

export type ToastTone = 'info' | 'success' | 'error';

export interface ToastOptions {
  title: ReactNode;
  description?: ReactNode;
  tone?: ToastTone;
  /** Milliseconds on screen; errors stay twice as long by default. */
  duration?: number;
}

export interface ToastItem extends ToastOptions {
  id: number;
  open: boolean;
}

interface ToastContextValue {
  toast: (options: ToastOptions) => void;
}

const ToastContext = createContext<ToastContextValue | null>(null);

// The viewport (Radix Toast and its layers, ~15 KB gzip) loads with the first toast, not with every
// page: a reader's first load never needs it. If its code cannot be fetched (offline), a plain
// live region shows the toasts instead of an error screen.
const ToastViewport = lazy(() =>
  import('./toast-viewport')
    .then((m) => ({ default: m.ToastViewport }))
    .catch(() => ({ default: PlainToastList })),
);

/** Holds the toasts and their viewport; wrap the app in it once. */
export function ToastProvider({ children }: { children: ReactNode }) {
  const [items, setItems] = useState<ToastItem[]>([]);
  // Once a toast has been asked for, the viewport stays mounted (its region keeps its hotkey).
  const [wanted, setWanted] = useState(false);

  const toast = useCallback((options: ToastOptions) => {
    setWanted(true);
    setItems((current) => [...current, { ...options, id: Date.now() + Math.random(), open: true }]);
  }, []);

  const close = useCallback((id: number) => {
    setItems((current) => current.map((item) => (item.id === id ? { ...item, open: false } : item)));
    // Leave time for the closing state before dropping it from the list.
    window.setTimeout(() => setItems((current) => current.filter((item) => item.id !== id)), 300);
  }, []);

  const value = useMemo(() => ({ toast }), [toast]);

  return (
    <ToastContext.Provider value={value}>
      {children}
      {wanted && (
        <Suspense fallback={null}>
          <ToastViewport items={items} onClose={close} />
        </Suspense>
      )}
    </ToastContext.Provider>
  );
}

export interface ToastViewportProps {
  items: ToastItem[];
  onClose: (id: number) => void;
}

/** Toasts without Radix, for when the viewport's code could not be loaded. */
function PlainToastList({ items, onClose }: ToastViewportProps) {
  return (
    <ol aria-live="polite" aria-label="Notifications" data-print="hide" className="fixed right-0 bottom-0 z-50 m-0 flex w-full max-w-sm list-none flex-col gap-2 p-4">
      {items
        .filter((item) => item.open)
        .map((item) => (
          <li key={item.id} className="rounded-md border border-line border-l-4 bg-paper p-3 text-sm shadow-raised">
            <p className="font-semibold text-ink">{item.title}</p>
            {item.description && <p className="mt-0.5 text-ink-muted">{item.description}</p>}
            <button type="button" className="mt-1 text-ink-muted underline" onClick={() => onClose(item.id)}>
              Dismiss
            </button>
          </li>
        ))}
    </ol>
  );
}

/** `toast({ title, description?, tone? })` from anywhere inside `ToastProvider`. */
export function useToast(): ToastContextValue {
  const value = useContext(ToastContext);
  if (!value) throw new Error('useToast must be used inside <ToastProvider>.');
  return value;
}
