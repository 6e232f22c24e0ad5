import { useId, useState, type FormEvent } from 'react';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent, DialogTrigger } from '@/components/ui/dialog';
import { Field, Input } from '@/components/ui/field';
import {
  defaultHeardShortcuts,
  defaultShortcuts,
  keyLabel,
  shortcutKeyProblem,
  type HeardShortcuts,
  type PlayerShortcuts,
} from '../lib/player-shortcuts';

export interface ShortcutSettingsProps {
  settings: PlayerShortcuts;
  onSave: (next: PlayerShortcuts) => void;
  /** Whether the player offers "Log a reading" (and so its key). */
  withReading: boolean;
  /** The "Heard on this clip" list's keys, when the player shows that list with its actions. */
  heard?: { settings: HeardShortcuts; onSave: (next: HeardShortcuts) => void };
  className?: string;
}

/**
 * "Keyboard shortcuts…": turns the player's single-key shortcuts off, or changes their keys
 * (and those of the "Heard on this clip" list, which go on and off with them). A key typed into
 * a box replaces the one there, so one press picks it.
 */
export function ShortcutSettings({ settings, onSave, withReading, heard, className }: ShortcutSettingsProps) {
  const [open, setOpen] = useState(false);
  return (
    <Dialog open={open} onOpenChange={setOpen}>
      <DialogTrigger asChild>
        <Button size="sm" variant="quiet" className={className}>
          Keyboard shortcuts…
        </Button>
      </DialogTrigger>
      {open && (
        <ShortcutForm
          settings={settings}
          withReading={withReading}
          heard={heard?.settings}
          onSave={(next, nextHeard) => {
            onSave(next);
            if (heard && nextHeard) heard.onSave(nextHeard);
            setOpen(false);
          }}
        />
      )}
    </Dialog>
  );
}

function ShortcutForm({
  settings,
  withReading,
  heard,
  onSave,
}: {
  settings: PlayerShortcuts;
  withReading: boolean;
  heard: HeardShortcuts | undefined;
  onSave: (next: PlayerShortcuts, heard: HeardShortcuts | null) => void;
}) {
  const [enabled, setEnabled] = useState(settings.enabled);
  const [mark, setMark] = useState(keyLabel(settings.mark));
  const [reading, setReading] = useState(keyLabel(settings.reading));
  const [accept, setAccept] = useState(keyLabel(heard?.accept ?? defaultHeardShortcuts.accept));
  const [dismiss, setDismiss] = useState(keyLabel(heard?.dismiss ?? defaultHeardShortcuts.dismiss));
  const [undo, setUndo] = useState(keyLabel(heard?.undo ?? defaultHeardShortcuts.undo));
  const [tried, setTried] = useState(false);
  const formId = useId();
  const enabledId = useId();

  const markProblem = shortcutKeyProblem(mark);
  const readingProblem = withReading ? shortcutKeyProblem(reading, mark) : null;
  // Each of the list's keys differs from the player's and from the list's keys before it.
  const playerKeys = withReading ? [mark, reading] : [mark];
  const acceptProblem = heard ? shortcutKeyProblem(accept, playerKeys) : null;
  const dismissProblem = heard ? shortcutKeyProblem(dismiss, [...playerKeys, accept]) : null;
  const undoProblem = heard ? shortcutKeyProblem(undo, [...playerKeys, accept, dismiss]) : null;
  const valid = !enabled || [markProblem, readingProblem, acceptProblem, dismissProblem, undoProblem].every((p) => p === null);

  function submit(event: FormEvent) {
    event.preventDefault();
    setTried(true);
    if (!valid) return;
    // Keys are kept while off, so turning them on again brings back the builder's choice.
    const keep = (typed: string, problem: string | null, old: string) => (problem === null ? typed.toLowerCase() : old);
    onSave(
      {
        enabled,
        mark: keep(mark, markProblem, settings.mark),
        reading: withReading ? keep(reading, readingProblem, settings.reading) : settings.reading,
      },
      heard
        ? {
            accept: keep(accept, acceptProblem, heard.accept),
            dismiss: keep(dismiss, dismissProblem, heard.dismiss),
            undo: keep(undo, undoProblem, heard.undo),
          }
        : null,
    );
  }

  function backToDefaults() {
    setEnabled(defaultShortcuts.enabled);
    setMark(keyLabel(defaultShortcuts.mark));
    setReading(keyLabel(defaultShortcuts.reading));
    setAccept(keyLabel(defaultHeardShortcuts.accept));
    setDismiss(keyLabel(defaultHeardShortcuts.dismiss));
    setUndo(keyLabel(defaultHeardShortcuts.undo));
  }

  const defaults = [defaultShortcuts.mark, ...(withReading ? [defaultShortcuts.reading] : []), ...(heard ? [defaultHeardShortcuts.accept, defaultHeardShortcuts.dismiss, defaultHeardShortcuts.undo] : [])].map(keyLabel);
  const defaultsText = defaults.length === 1 ? defaults[0] : `${defaults.slice(0, -1).join(', ')} and ${defaults.at(-1)}`;

  // The last character typed wins, so pressing a key in a box that holds one replaces it.
  return (
    <DialogContent
      title="Keyboard shortcuts in the player"
      description={`Single keys that work while the player has focus${heard ? ' (those of the heard readings while their list has it)' : ''}, never while you type in a box. Turn them off if they get in your way (speech input, a switch), or pick other keys.`}
      footer={
        <>
          <DialogClose asChild>
            <Button variant="secondary">Cancel</Button>
          </DialogClose>
          <Button type="submit" form={formId} variant="primary">
            Save shortcuts
          </Button>
        </>
      }
    >
      <form id={formId} onSubmit={submit} className="flex flex-col gap-4" noValidate>
        <div className="flex items-start gap-2">
          <input
            id={enabledId}
            type="checkbox"
            checked={enabled}
            onChange={(event) => setEnabled(event.target.checked)}
            className="mt-1 size-4 accent-accent"
          />
          <label htmlFor={enabledId} className="text-sm font-medium">
            Use single-key shortcuts in the player
          </label>
        </div>
        <div className="grid grid-cols-1 gap-3 sm:grid-cols-2">
          <KeyField label="Mark this moment" value={mark} onChange={setMark} disabled={!enabled} error={tried && enabled ? markProblem : null} />
          {withReading && <KeyField label="Log a reading" value={reading} onChange={setReading} disabled={!enabled} error={tried && enabled ? readingProblem : null} />}
        </div>
        {heard && (
          <fieldset className="flex flex-col gap-2">
            <legend className="mb-1 text-sm font-medium">In the list “Heard on this clip”</legend>
            <div className="grid grid-cols-1 gap-3 sm:grid-cols-3">
              <KeyField label="Accept" value={accept} onChange={setAccept} disabled={!enabled} error={tried && enabled ? acceptProblem : null} />
              <KeyField label="Dismiss" value={dismiss} onChange={setDismiss} disabled={!enabled} error={tried && enabled ? dismissProblem : null} />
              <KeyField label="Undo a dismissal" value={undo} onChange={setUndo} disabled={!enabled} error={tried && enabled ? undoProblem : null} />
            </div>
          </fieldset>
        )}
        <p className="text-xs text-ink-muted">
          Space plays or pauses and the left and right arrows step one frame while the picture has focus
          {heard ? '; in the heard list the up and down arrows move, Enter accepts and Delete dismisses' : ''}; those stay on.{' '}
          <button type="button" className="text-accent underline underline-offset-2 hover:text-accent-strong" onClick={backToDefaults}>
            Back to {defaultsText}
          </button>
        </p>
      </form>
    </DialogContent>
  );
}

/** The last character typed, as the key it names. */
const lastChar = (text: string) => [...text].at(-1)?.toUpperCase() ?? '';

/** One remappable key: a single letter or digit, the last one typed. */
function KeyField({ label, value, onChange, disabled, error }: { label: string; value: string; onChange: (key: string) => void; disabled: boolean; error: string | null }) {
  return (
    <Field label={label} hint="One letter or digit." error={error}>
      <Input
        value={value}
        disabled={disabled}
        autoComplete="off"
        autoCapitalize="characters"
        spellCheck={false}
        onChange={(event) => onChange(lastChar(event.target.value))}
        className="figures w-20 text-center uppercase"
      />
    </Field>
  );
}
