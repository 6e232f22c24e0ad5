import { useId, useRef, useState, type PointerEvent as ReactPointerEvent } from 'react';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Clip } from '@shared/clips/clip.schema';
import { allUnits, unitTable, type AnyUnit } from '@shared/measure/quantities';
import type { DisplayRegion } from '@shared/speech/speech.schema';
import { Button } from '@/components/ui/button';
import { Input, Select } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { apiFetch, errorMessage } from '@/lib/api';
import { clipQueries } from '../api/clip-queries';

/*
 * Marking where an instrument's display is in the clip's picture, so the server reads its digits
 * (PUT /api/clips/:clipId/display-region). The builder drags a box over the picture, or types the
 * box as percentages of the frame; the unit says what the digits are in (a display shows no unit).
 */

/** The smallest box worth reading: 2 % of the frame each way. */
const MIN_SIZE = 0.02;

/** Marking state, shared by the box over the picture and the controls below it. */
export interface DisplayMarking {
  clipId: number;
  /** The box being drawn or edited; null when not marking. */
  draft: DisplayRegion | null;
  setDraft: (r: DisplayRegion | null) => void;
  /** The region the server has, if any. */
  saved: (DisplayRegion & { unit: AnyUnit; state: string }) | null;
}

/** The region the server has for the clip and the box being drawn. */
export function useDisplayMarking(clip: Clip): DisplayMarking {
  const query = useQuery(clipQueries.suggestions(clip.id));
  const [draft, setDraft] = useState<DisplayRegion | null>(null);
  return { clipId: clip.id, draft, setDraft, saved: query.data?.displayRegion ?? null };
}

const clamp01 = (n: number) => Math.min(1, Math.max(0, n));
const pct = (n: number) => `${(n * 100).toFixed(2)}%`;

/** The picture's box inside the video element (a picture of another shape is letterboxed). */
function pictureBox(element: DOMRect, frame: { width: number; height: number } | null) {
  if (!frame || frame.width <= 0 || frame.height <= 0) return { left: 0, top: 0, width: element.width, height: element.height };
  const scale = Math.min(element.width / frame.width, element.height / frame.height);
  const width = frame.width * scale;
  const height = frame.height * scale;
  return { left: (element.width - width) / 2, top: (element.height - height) / 2, width, height };
}

/**
 * Over the picture: the saved region as a dashed outline, and while marking a layer the builder
 * drags a box on (pointer, mouse or touch). Rendered inside the player's frame, which it covers.
 */
export function DisplayRegionOverlay({ marking, clip }: { marking: DisplayMarking; clip: Clip }) {
  const layer = useRef<HTMLDivElement>(null);
  const start = useRef<{ x: number; y: number } | null>(null);
  const shown = marking.draft ?? marking.saved;
  const frame = clip.probe ? { width: clip.probe.width, height: clip.probe.height } : null;
  const [box, setBox] = useState<{ left: number; top: number; width: number; height: number } | null>(null);

  function pointAt(event: ReactPointerEvent<HTMLDivElement>) {
    const rect = event.currentTarget.getBoundingClientRect();
    const pic = pictureBox(rect, frame);
    setBox(pic);
    return { x: clamp01((event.clientX - rect.left - pic.left) / pic.width), y: clamp01((event.clientY - rect.top - pic.top) / pic.height) };
  }
  function update(event: ReactPointerEvent<HTMLDivElement>) {
    if (!start.current) return;
    const p = pointAt(event);
    const x = Math.min(start.current.x, p.x);
    const y = Math.min(start.current.y, p.y);
    marking.setDraft({ x, y, width: Math.abs(p.x - start.current.x), height: Math.abs(p.y - start.current.y) });
  }

  if (!shown) return null;
  const pic = box ?? (layer.current ? pictureBox(layer.current.getBoundingClientRect(), frame) : null);
  const outline = (
    <div
      aria-hidden="true"
      data-display-outline=""
      className="pointer-events-none absolute border-2 border-dashed border-accent bg-accent/10"
      style={
        pic
          ? { left: pic.left + shown.x * pic.width, top: pic.top + shown.y * pic.height, width: shown.width * pic.width, height: shown.height * pic.height }
          : { left: pct(shown.x), top: pct(shown.y), width: pct(shown.width), height: pct(shown.height) }
      }
    />
  );
  return (
    <div
      ref={layer}
      data-display-layer=""
      className={marking.draft ? 'absolute inset-0 cursor-crosshair touch-none' : 'pointer-events-none absolute inset-0'}
      onPointerDown={(event) => {
        if (!marking.draft) return;
        event.currentTarget.setPointerCapture(event.pointerId);
        start.current = pointAt(event);
        marking.setDraft({ ...start.current, width: 0, height: 0 });
      }}
      onPointerMove={update}
      onPointerUp={(event) => {
        update(event);
        start.current = null;
      }}
    >
      {outline}
    </div>
  );
}

/** PUT (set) or DELETE (remove) the display region; the suggestions are asked for again. */
function useSaveRegion(clipId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: (DisplayRegion & { unit: AnyUnit }) | null) =>
      body
        ? apiFetch(`/api/clips/${clipId}/display-region`, { method: 'PUT', body })
        : apiFetch(`/api/clips/${clipId}/display-region`, { method: 'DELETE' }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: clipQueries.suggestions(clipId).queryKey }),
  });
}

/** A display may show any quantity but a ratio. */
const displayUnits = allUnits.filter((u) => unitTable[u].quantity !== 'ratio');

/**
 * Below the player, for the clip's builder: "Read a display" starts marking; the box's four
 * figures can be typed (percent of the frame) as well as dragged; Save sends it with the unit.
 */
export function DisplayRegionControls({ marking, defaultUnit }: { marking: DisplayMarking; defaultUnit?: AnyUnit }) {
  const save = useSaveRegion(marking.clipId);
  const { toast } = useToast();
  const [unit, setUnit] = useState<AnyUnit>(marking.saved?.unit ?? defaultUnit ?? 'in');
  const hintId = useId();
  const { draft, saved } = marking;
  const tooSmall = draft !== null && (draft.width < MIN_SIZE || draft.height < MIN_SIZE);

  function setField(field: keyof DisplayRegion, text: string) {
    if (!draft) return;
    const n = Number(text);
    if (!Number.isFinite(n)) return;
    const next = { ...draft, [field]: clamp01(n / 100) };
    next.width = Math.min(next.width, 1 - next.x);
    next.height = Math.min(next.height, 1 - next.y);
    marking.setDraft(next);
  }

  function submit() {
    if (!draft || tooSmall) return;
    save.mutate(
      { ...draft, unit },
      {
        onSuccess: () => {
          marking.setDraft(null);
          toast({ title: 'Display marked', description: 'Its digits are being read; figures shown for half a second or more are listed with what was heard.' });
        },
        onError: (error) => toast({ title: 'The display region was not saved', description: errorMessage(error), tone: 'error' }),
      },
    );
  }

  if (!draft) {
    return (
      <div className="flex flex-wrap items-center gap-2 text-xs text-ink-muted" data-display-controls="">
        {saved ? (
          <span>
            Display read in <span className="figures">{unitTable[saved.unit].symbol}</span> from the dashed box
            {saved.state === 'running' || saved.state === 'queued' ? ' (reading now)' : saved.state === 'off' ? ' (no display reader on this server)' : ''}.
          </span>
        ) : (
          <span>Has an instrument display in the picture? Mark it and its digits are read for you.</span>
        )}
        <Button size="sm" variant="quiet" className="h-7 px-2" onClick={() => marking.setDraft(saved ? { x: saved.x, y: saved.y, width: saved.width, height: saved.height } : { x: 0.35, y: 0.3, width: 0.3, height: 0.3 })}>
          {saved ? 'Move the display box' : 'Mark a display'}
        </Button>
        {saved && (
          <Button size="sm" variant="quiet" className="h-7 px-2" loading={save.isPending} onClick={() => save.mutate(null)}>
            Stop reading the display
          </Button>
        )}
      </div>
    );
  }

  return (
    <form
      noValidate
      className="flex flex-col gap-2 rounded-md border border-accent/50 bg-accent-wash/40 p-2"
      aria-describedby={hintId}
      data-display-controls=""
      onSubmit={(event) => {
        event.preventDefault();
        submit();
      }}
    >
      <p id={hintId} className="text-xs text-ink-muted">
        Drag a box over the instrument’s display in the picture, or type it below as percent of the frame from its top left. Keep the box tight around the digits.
      </p>
      <div className="flex flex-wrap items-end gap-2">
        {(['x', 'y', 'width', 'height'] as const).map((field) => (
          <label key={field} className="flex flex-col gap-0.5 text-xs font-medium">
            {field === 'x' ? 'Left %' : field === 'y' ? 'Top %' : field === 'width' ? 'Width %' : 'Height %'}
            <Input
              type="number"
              min={0}
              max={100}
              step="any"
              value={Number((draft[field] * 100).toFixed(2))}
              onChange={(event) => setField(field, event.target.value)}
              className="figures h-8 w-20 text-sm"
            />
          </label>
        ))}
        <label className="flex flex-col gap-0.5 text-xs font-medium">
          Digits are in
          <Select size="sm" value={unit} onChange={(event) => setUnit(event.target.value as AnyUnit)} className="h-8">
            {displayUnits.map((u) => (
              <option key={u} value={u}>
                {unitTable[u].name}
              </option>
            ))}
          </Select>
        </label>
        <span className="flex gap-1">
          <Button type="submit" size="sm" variant="primary" className="h-8" loading={save.isPending} loadingText="Saving…" disabled={tooSmall}>
            Read this display
          </Button>
          <Button size="sm" variant="quiet" className="h-8" onClick={() => marking.setDraft(null)}>
            Cancel
          </Button>
        </span>
      </div>
      {tooSmall && <p className="text-xs text-danger">The box is too small to read: make it at least 2 % of the frame each way.</p>}
    </form>
  );
}
