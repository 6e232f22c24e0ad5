import { useId, useState } from 'react';
import { clipPatchSchema, type Clip } from '@shared/clips/clip.schema';
import { Button } from '@/components/ui/button';
import { Input } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { useUpdateClip } from '../api/clip-mutations';
import { formatTime } from '../lib/clip-format';

const toText = (seconds: number | null) => (seconds == null ? '' : String(Math.round(seconds * 10) / 10));

/**
 * In and out points in seconds to the tenth, typed or taken from the player.
 * The original is kept whole; trim only sets what readers are shown.
 * Remount (key) when the clip's trim changes to start from the saved values.
 */
export function TrimEditor({ buildId, clip, duration, currentTime }: { buildId: number; clip: Clip; duration: number; currentTime: number }) {
  const [inText, setInText] = useState(toText(clip.trimInS));
  const [outText, setOutText] = useState(toText(clip.trimOutS));
  const [error, setError] = useState<string | null>(null);
  const update = useUpdateClip(buildId);
  const { toast } = useToast();
  const errorId = useId();
  const dirty = inText !== toText(clip.trimInS) || outText !== toText(clip.trimOutS);

  function parse(text: string): number | null | 'bad' {
    const trimmed = text.trim().replace(',', '.');
    if (!trimmed) return null;
    const value = Number(trimmed);
    return Number.isFinite(value) && value >= 0 ? Math.round(value * 10) / 10 : 'bad';
  }

  function save(trimInS: number | null, trimOutS: number | null, what: string) {
    if (duration > 0 && ((trimInS ?? 0) >= duration || (trimOutS ?? 0) > duration + 0.05)) {
      setError(`Both points must lie inside the clip (0–${formatTime(duration)}).`);
      return;
    }
    const checked = clipPatchSchema.safeParse({ trimInS, trimOutS });
    if (!checked.success) {
      setError(checked.error.issues[0]?.message ?? 'Check the in and out points.');
      return;
    }
    setError(null);
    update.mutate(
      { clipId: clip.id, patch: checked.data },
      {
        onSuccess: (saved) =>
          toast({
            tone: 'success',
            title: what,
            description:
              saved.trimInS == null && saved.trimOutS == null
                ? 'Readers see the whole clip.'
                : `Readers see ${formatTime(saved.trimInS ?? 0)}–${formatTime(saved.trimOutS ?? duration)}.`,
          }),
        onError: (e) => setError(`Not saved: ${errorMessage(e)}`),
      },
    );
  }

  function saveTyped() {
    const trimIn = parse(inText);
    const trimOut = parse(outText);
    if (trimIn === 'bad' || trimOut === 'bad') {
      setError('Type seconds as a number, e.g. 12.5, or leave the box empty.');
      return;
    }
    save(trimIn, trimOut, 'Trim saved');
  }

  // In: round down, out: round up, so the frame on screen stays inside the range.
  const hereIn = Math.floor(currentTime * 10) / 10;
  const hereOut = Math.min(Math.ceil(currentTime * 10) / 10, Math.floor(duration * 10) / 10 || Infinity);

  return (
    <fieldset className="flex flex-col gap-2 rounded-md border border-rule p-2" aria-describedby={error ? errorId : undefined}>
      <legend className="px-1 text-sm font-medium">Trim (what readers see)</legend>
      <p className="text-xs text-ink-muted">Seconds to the tenth. Empty: from the start, to the end.</p>
      <div className="flex flex-wrap items-end gap-2">
        <label className="flex flex-col gap-1 text-xs font-medium">
          In, s
          <Input
            type="number"
            inputMode="decimal"
            step={0.1}
            min={0}
            max={duration || undefined}
            value={inText}
            placeholder="0.0"
            onChange={(event) => setInText(event.target.value)}
            className="figures h-8 w-28 px-2 text-sm"
          />
        </label>
        <label className="flex flex-col gap-1 text-xs font-medium">
          Out, s
          <Input
            type="number"
            inputMode="decimal"
            step={0.1}
            min={0}
            max={duration || undefined}
            value={outText}
            placeholder={duration ? String(Math.floor(duration * 10) / 10) : 'end'}
            onChange={(event) => setOutText(event.target.value)}
            className="figures h-8 w-28 px-2 text-sm"
          />
        </label>
        <Button size="sm" variant="secondary" onClick={saveTyped} disabled={!dirty} loading={update.isPending && dirty}>
          Save trim
        </Button>
      </div>
      <div className="flex flex-wrap gap-1">
        <Button
          size="sm"
          variant="quiet"
          className="h-7 px-2"
          onClick={() => save(hereIn, clip.trimOutS != null && clip.trimOutS > hereIn ? clip.trimOutS : null, 'In point set')}
        >
          Set in at <span className="figures">{formatTime(hereIn)}</span>
        </Button>
        <Button
          size="sm"
          variant="quiet"
          className="h-7 px-2"
          onClick={() => save(clip.trimInS != null && clip.trimInS < hereOut ? clip.trimInS : null, hereOut, 'Out point set')}
        >
          Set out at <span className="figures">{formatTime(hereOut)}</span>
        </Button>
        {(clip.trimInS != null || clip.trimOutS != null) && (
          <Button size="sm" variant="quiet" className="h-7 px-2" onClick={() => save(null, null, 'Trim cleared')}>
            Clear trim
          </Button>
        )}
      </div>
      {error && (
        <p id={errorId} role="alert" className="max-w-64 text-xs text-danger">
          {error}
        </p>
      )}
    </fieldset>
  );
}
