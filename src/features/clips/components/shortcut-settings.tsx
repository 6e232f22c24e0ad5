import { useId, useState, type FormEvent } from 'react';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent, DialogTrigger } from '@/components/ui/dialog';
import { Field, Input } from '@/components/ui/field';
import { defaultShortcuts, keyLabel, shortcutKeyProblem, type PlayerShortcuts } from '../lib/player-shortcuts';

export interface ShortcutSettingsProps {
  settings: PlayerShortcuts;
  onSave: (next: PlayerShortcuts) => void;
  /** Whether the player offers "Log a reading" (and so its key). */
  withReading: boolean;
  className?: string;
}

/**
 * "Keyboard shortcuts…": turns the player's single-key shortcuts off, or changes their keys.
 * A key typed into a box replaces the one there, so one press picks it.
 */
export function ShortcutSettings({ settings, onSave, withReading, className }: ShortcutSettingsProps) {
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
          onSave={(next) => {
            onSave(next);
            setOpen(false);
          }}
        />
      )}
    </Dialog>
  );
}

function ShortcutForm({ settings, withReading, onSave }: { settings: PlayerShortcuts; withReading: boolean; onSave: (next: PlayerShortcuts) => void }) {
  const [enabled, setEnabled] = useState(settings.enabled);
  const [mark, setMark] = useState(keyLabel(settings.mark));
  const [reading, setReading] = useState(keyLabel(settings.reading));
  const [tried, setTried] = useState(false);
  const formId = useId();
  const enabledId = useId();

  const markProblem = shortcutKeyProblem(mark);
  const readingProblem = withReading ? shortcutKeyProblem(reading, mark) : null;
  const valid = !enabled || (markProblem === null && readingProblem === null);

  function submit(event: FormEvent) {
    event.preventDefault();
    setTried(true);
    if (!valid) return;
    // Keys are kept while off, so turning them on again brings back the builder's choice.
    const keep = (typed: string, problem: string | null, old: string) => (problem === null ? typed.toLowerCase() : old);
    onSave({
      enabled,
      mark: keep(mark, markProblem, settings.mark),
      reading: withReading ? keep(reading, readingProblem, settings.reading) : settings.reading,
    });
  }

  // The last character typed wins, so pressing a key in a box that holds one replaces it.
  return (
    <DialogContent
      title="Keyboard shortcuts in the player"
      description="Single keys that work while the player has focus, never while you type in a box. Turn them off if they get in your way (speech input, a switch), or pick other keys."
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
        <p className="text-xs text-ink-muted">
          Space plays or pauses and the left and right arrows step one frame while the picture has focus; those stay on.{' '}
          <button
            type="button"
            className="text-accent underline underline-offset-2 hover:text-accent-strong"
            onClick={() => {
              setEnabled(defaultShortcuts.enabled);
              setMark(keyLabel(defaultShortcuts.mark));
              setReading(keyLabel(defaultShortcuts.reading));
            }}
          >
            Back to {keyLabel(defaultShortcuts.mark)}
            {withReading && ` and ${keyLabel(defaultShortcuts.reading)}`}
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
