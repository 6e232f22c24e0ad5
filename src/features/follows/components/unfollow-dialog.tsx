import { AlertDialog } from 'radix-ui';
import { Button } from '@/components/ui/button';

/**
 * "Unfollow Ines Calloway?": an alert dialog (it asks before something the reader may regret),
 * with "Keep following" focused first. The confirm button stays in the dialog while the change is
 * saved; the caller closes it when it is done. On closing, focus goes where `returnFocus` says
 * (the button that opened it, or the list when that button went with the row).
 */
export function UnfollowDialog({
  open,
  onOpenChange,
  builderName,
  pending,
  onConfirm,
  returnFocus,
}: {
  open: boolean;
  onOpenChange: (open: boolean) => void;
  builderName: string;
  pending: boolean;
  onConfirm: () => void;
  returnFocus: () => HTMLElement | null;
}) {
  return (
    <AlertDialog.Root open={open} onOpenChange={onOpenChange}>
      <AlertDialog.Portal>
        <AlertDialog.Overlay className="fixed inset-0 z-40 bg-ink/35" />
        <AlertDialog.Content
          data-unfollow-dialog=""
          className="fixed top-1/2 left-1/2 z-50 w-[min(30rem,calc(100vw-2rem))] max-h-[calc(100dvh-2rem)] -translate-x-1/2 -translate-y-1/2 overflow-auto rounded-lg border border-line bg-paper p-5 shadow-raised"
          onCloseAutoFocus={(event) => {
            event.preventDefault();
            returnFocus()?.focus();
          }}
        >
          <AlertDialog.Title className="text-lg font-semibold">Unfollow {builderName}?</AlertDialog.Title>
          <AlertDialog.Description className="mt-1 text-sm text-ink-muted">
            You will get no more e-mail when {builderName} publishes, and their stories leave “From builders you follow” on the home page. You can
            follow them again from their profile at any time.
          </AlertDialog.Description>
          <div className="mt-5 flex flex-wrap justify-end gap-2">
            <AlertDialog.Cancel asChild>
              <Button variant="secondary" autoFocus disabled={pending}>
                Keep following
              </Button>
            </AlertDialog.Cancel>
            <Button variant="danger" onClick={onConfirm} loading={pending} loadingText="Unfollowing…">
              Unfollow {builderName}
            </Button>
          </div>
        </AlertDialog.Content>
      </AlertDialog.Portal>
    </AlertDialog.Root>
  );
}
