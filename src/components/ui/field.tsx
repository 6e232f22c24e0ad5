import { createContext, useContext, useId, type ComponentProps, type ReactNode } from 'react';
import { cn } from '@/lib/cn';

interface FieldControlProps {
  id: string;
  'aria-describedby'?: string;
  'aria-invalid'?: true;
  // aria-required rather than required: forms validate with zod, not the browser's bubbles.
  'aria-required'?: true;
}

const FieldContext = createContext<FieldControlProps | null>(null);

export interface FieldProps {
  label: ReactNode;
  /** Help shown under the label: units, format, where the number comes from. */
  hint?: ReactNode;
  /** Error text; when set the control is marked invalid and points at it. */
  error?: ReactNode;
  required?: boolean;
  /** Use when the control needs a known id; otherwise one is made. */
  id?: string;
  className?: string;
  /** One control: `Input`, `Select` or `Textarea`. They wire themselves to this field. */
  children: ReactNode;
}

/** A label, an optional hint and error, and one control wired to them with aria-describedby. */
export function Field({ label, hint, error, required, id, className, children }: FieldProps) {
  const generatedId = useId();
  const controlId = id ?? generatedId;
  const hintId = hint ? `${controlId}-hint` : undefined;
  const errorId = error ? `${controlId}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;

  return (
    <div className={cn('flex flex-col gap-1', className)}>
      <label htmlFor={controlId} className="text-sm font-medium text-ink">
        {label}
        {required && (
          <span className="ml-1 font-normal text-ink-muted" aria-hidden="true">(required)</span>
        )}
      </label>
      {hint && (
        <p id={hintId} className="text-xs text-ink-muted">
          {hint}
        </p>
      )}
      <FieldContext.Provider
        value={{ id: controlId, 'aria-describedby': describedBy, 'aria-invalid': error ? true : undefined, 'aria-required': required ? true : undefined }}
      >
        {children}
      </FieldContext.Provider>
      {error && (
        <p id={errorId} className="flex items-start gap-1.5 text-sm text-danger">
          <svg viewBox="0 0 16 16" className="mt-0.5 size-3.5 shrink-0" aria-hidden="true">
            <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
            <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
          </svg>
          <span>{error}</span>
        </p>
      )}
    </div>
  );
}

const controlBase =
  'w-full rounded-md border border-line bg-paper px-3 text-base text-ink placeholder:text-ink-muted/80 ' +
  'disabled:cursor-not-allowed disabled:bg-paper-2 disabled:opacity-70 ' +
  'aria-invalid:border-danger aria-invalid:border-2';

function useFieldControl<P extends { id?: string }>(props: P): P {
  const field = useContext(FieldContext);
  if (!field) return props;
  // The control's own props win, so a caller can still override.
  return { ...field, ...props, id: props.id ?? field.id };
}

export function Input({ className, ...props }: ComponentProps<'input'>) {
  const wired = useFieldControl(props);
  return <input className={cn(controlBase, 'h-10', className)} {...wired} />;
}

/** Native select: accessible, works on phones, prints. Pass `<option>`s as children. */
export function Select({ className, size = 'md', ...props }: Omit<ComponentProps<'select'>, 'size'> & { size?: 'sm' | 'md' }) {
  const wired = useFieldControl(props);
  return (
    <select
      className={cn(controlBase, size === 'sm' ? 'h-8 px-2 text-sm' : 'h-10', 'pr-8', className)}
      {...wired}
    />
  );
}

export function Textarea({ className, rows = 4, ...props }: ComponentProps<'textarea'>) {
  const wired = useFieldControl(props);
  return <textarea rows={rows} className={cn(controlBase, 'py-2 leading-relaxed', className)} {...wired} />;
}
