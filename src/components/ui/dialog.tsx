import type { ReactNode } from 'react';
import { Dialog as RadixDialog } from 'radix-ui';
import { Button, type ButtonVariant } from './button';

/** Root of a dialog; control it with `open`/`onOpenChange` or leave it to a `DialogTrigger`. */
export const Dialog = RadixDialog.Root;
/** Wrap the opening button with `asChild`. */
export const DialogTrigger = RadixDialog.Trigger;
/** Wrap a button with `asChild` to close the dialog. */
export const DialogClose = RadixDialog.Close;

export interface DialogContentProps {
  title: ReactNode;
  /** What the dialog is about; read out when it opens. */
  description?: ReactNode;
  children?: ReactNode;
  /** Buttons, right-aligned at the bottom. */
  footer?: ReactNode;
}

/** A modal panel with a title, focus trapped inside, Escape to close. */
export function DialogContent({ title, description, children, footer }: DialogContentProps) {
  return (
    <RadixDialog.Portal>
      <RadixDialog.Overlay className="fixed inset-0 z-40 bg-ink/35" />
      <RadixDialog.Content
        className="fixed top-1/2 left-1/2 z-50 w-[min(32rem,calc(100vw-2rem))] max-h-[calc(100dvh-2rem)] -translate-x-1/2 -translate-y-1/2 overflow-auto rounded-lg border border-line bg-paper p-5 shadow-raised"
        // Without a description, say so explicitly so Radix does not point at a missing element.
        {...(description ? {} : { 'aria-describedby': undefined })}
      >
        <RadixDialog.Title className="text-lg font-semibold">{title}</RadixDialog.Title>
        {description && (
          <RadixDialog.Description className="mt-1 text-sm text-ink-muted">{description}</RadixDialog.Description>
        )}
        {children && <div className="mt-4">{children}</div>}
        {footer && <div className="mt-5 flex flex-wrap justify-end gap-2">{footer}</div>}
      </RadixDialog.Content>
    </RadixDialog.Portal>
  );
}

export interface ConfirmDialogProps {
  open: boolean;
  onOpenChange: (open: boolean) => void;
  title: ReactNode;
  description: ReactNode;
  confirmLabel: ReactNode;
  cancelLabel?: ReactNode;
  confirmVariant?: ButtonVariant;
  onConfirm: () => void;
  pending?: boolean;
}

/** Asks before doing something consequential; the cancel button has focus first. */
export function ConfirmDialog({
  open,
  onOpenChange,
  title,
  description,
  confirmLabel,
  cancelLabel = 'Cancel',
  confirmVariant = 'primary',
  onConfirm,
  pending,
}: ConfirmDialogProps) {
  return (
    <Dialog open={open} onOpenChange={onOpenChange}>
      <DialogContent
        title={title}
        description={description}
        footer={
          <>
            <DialogClose asChild>
              <Button variant="secondary" autoFocus>
                {cancelLabel}
              </Button>
            </DialogClose>
            <Button variant={confirmVariant} onClick={onConfirm} loading={pending}>
              {confirmLabel}
            </Button>
          </>
        }
      />
    </Dialog>
  );
}

/** Something named that a list can delete. */
export interface Deletable {
  id: number;
  name: string;
}

export interface DeleteDialogProps<T extends Deletable> {
  /** The item asked about; null closes the dialog. */
  target: T | null;
  onClose: () => void;
  /** What it is, for the title and the button: "reading", "clearance". */
  what: string;
  description: ReactNode;
  pending: boolean;
  /** Deletes by id, with the mutation's callbacks (`mutation.mutate`). */
  remove: (id: number, callbacks: { onSuccess: () => void; onError: (error: unknown) => void }) => void;
  onDeleted: (target: T) => void;
  /** The server refused; the dialog has closed and the list shows why beside the item. */
  onRefused: (target: T, error: unknown) => void;
}

/** "Delete the reading “x”?": asks, deletes, and closes whether it worked or was refused. */
export function DeleteDialog<T extends Deletable>({ target, onClose, what, description, pending, remove, onDeleted, onRefused }: DeleteDialogProps<T>) {
  return (
    <ConfirmDialog
      open={target !== null}
      onOpenChange={(open) => !open && onClose()}
      title={`Delete the ${what} “${target?.name ?? ''}”?`}
      description={description}
      confirmLabel={`Delete ${what}`}
      confirmVariant="danger"
      pending={pending}
      onConfirm={() => {
        if (!target) return;
        remove(target.id, {
          onSuccess: () => {
            onClose();
            onDeleted(target);
          },
          onError: (error) => {
            onClose();
            onRefused(target, error);
          },
        });
      }}
    />
  );
}
