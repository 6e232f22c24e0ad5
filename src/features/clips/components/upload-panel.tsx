import { useId, useRef, useState, type DragEvent, type ReactNode } from 'react';
import type { Clip } from '@shared/clips/clip.schema';
import { Button } from '@/components/ui/button';
import { Progress } from '@/components/ui/progress';
import { cn } from '@/lib/cn';
import type { UnfinishedUpload } from '../api/resumable-upload';
import type { UploadItem } from '../api/use-clip-uploads';
import { formatBytes } from '../lib/clip-format';
import { formatSpeed, formatTimeLeft } from '../lib/upload-rate';
import { ClipStatusBadge } from './clip-status';

export interface UploadPanelProps {
  items: UploadItem[];
  /** The build's clips, to follow a sent file through processing. */
  clips: Clip[] | undefined;
  onAdd: (files: File[]) => void;
  onPause: (key: string) => void;
  onResume: (key: string) => void;
  onCancel: (key: string) => void;
  onRetry: (key: string) => void;
  onDismiss: (key: string) => void;
  onOpen: (clipId: number) => void;
  /** Uploads an earlier page left unfinished; choosing the same file again carries one on. */
  unfinished?: UnfinishedUpload[];
  onDiscardUnfinished?: (upload: UnfinishedUpload) => void;
}

/** A phone or tablet, where the picker can also record with the camera. */
function hasCamera(): boolean {
  return typeof window !== 'undefined' && typeof window.matchMedia === 'function' && window.matchMedia('(pointer: coarse)').matches;
}

/** A drop zone and a "Choose files" button, then one row per file: upload, processing, ready or failed. */
export function UploadPanel({ items, clips, onAdd, onPause, onResume, onCancel, onRetry, onDismiss, onOpen, unfinished = [], onDiscardUnfinished }: UploadPanelProps) {
  const inputRef = useRef<HTMLInputElement>(null);
  const hintId = useId();
  const [dragging, setDragging] = useState(false);
  const [camera] = useState(hasCamera);

  // One file input for both buttons: "Record" asks the picker for the camera (capture), "Choose"
  // leaves the choice to the builder; a phone's picker offers the camera there too.
  const pick = (record: boolean) => {
    const input = inputRef.current;
    if (!input) return;
    if (record) input.setAttribute('capture', 'environment');
    else input.removeAttribute('capture');
    input.click();
  };

  const carriesFiles = (event: DragEvent) => event.dataTransfer.types.includes('Files');

  const finished = items.filter((item) => isFinished(item, clips));

  return (
    <div className="flex flex-col gap-3">
      <div
        onDragEnter={(event) => {
          if (!carriesFiles(event)) return;
          event.preventDefault();
          setDragging(true);
        }}
        onDragOver={(event) => {
          if (!carriesFiles(event)) return;
          event.preventDefault();
          event.dataTransfer.dropEffect = 'copy';
        }}
        onDragLeave={(event) => {
          if (!event.currentTarget.contains(event.relatedTarget as Node | null)) setDragging(false);
        }}
        onDrop={(event) => {
          if (!carriesFiles(event)) return;
          event.preventDefault();
          setDragging(false);
          onAdd(Array.from(event.dataTransfer.files));
        }}
        className={cn(
          'flex flex-col items-start gap-2 rounded-md border border-dashed px-3 py-3 transition-colors',
          dragging ? 'border-accent bg-accent-wash' : 'border-line bg-paper-2/40',
        )}
      >
        <p id={hintId} className="text-sm text-ink-muted">
          {dragging ? 'Drop to upload.' : 'Drop video files here, or choose them. One clip per file; any length your phone or camera made.'}
        </p>
        <span className="flex flex-wrap gap-2">
          <Button size="sm" variant="primary" onClick={() => pick(false)} aria-describedby={hintId}>
            Choose files…
          </Button>
          {camera && (
            <Button size="sm" variant="secondary" onClick={() => pick(true)}>
              Record with the camera…
            </Button>
          )}
        </span>
        <input
          ref={inputRef}
          type="file"
          multiple
          // A hint for the picker only: the server checks what the file really is.
          accept="video/*"
          className="sr-only"
          tabIndex={-1}
          aria-hidden="true"
          onChange={(event) => {
            const files = Array.from(event.target.files ?? []);
            event.target.value = '';
            if (files.length) onAdd(files);
          }}
        />
      </div>

      {unfinished.length > 0 && (
        <ul aria-label="Unfinished uploads" className="flex flex-col divide-y divide-rule rounded-md border border-rule">
          {unfinished.map((u) => (
            <li key={u.urlStorageKey} className="flex flex-wrap items-center justify-between gap-2 px-3 py-2 text-sm">
              <span className="min-w-0 flex-1">
                <span className="font-medium">{u.fileName}</span>{' '}
                <span className="text-xs text-ink-muted">
                  {u.offset !== null && u.size > 0
                    ? `stopped at ${Math.floor((u.offset / u.size) * 100)} % (${formatBytes(u.offset)} of ${formatBytes(u.size)}).`
                    : `did not finish (${formatBytes(u.size)}).`}{' '}
                  Choose the same file again to carry on from there.
                </span>
              </span>
              {onDiscardUnfinished && (
                <Button size="sm" variant="quiet" onClick={() => onDiscardUnfinished(u)} aria-label={`Discard the unfinished upload of ${u.fileName}`}>
                  Discard
                </Button>
              )}
            </li>
          ))}
        </ul>
      )}

      {items.length > 0 && (
        <>
          <ul aria-label="Uploads" className="flex flex-col divide-y divide-rule rounded-md border border-rule">
            {items.map((item) => (
              <UploadRow
                key={item.key}
                item={item}
                clip={item.clipId ? clips?.find((clip) => clip.id === item.clipId) : undefined}
                onPause={() => onPause(item.key)}
                onResume={() => onResume(item.key)}
                onCancel={() => onCancel(item.key)}
                onRetry={() => onRetry(item.key)}
                onDismiss={() => onDismiss(item.key)}
                onOpen={onOpen}
              />
            ))}
          </ul>
          {finished.length > 1 && (
            <Button size="sm" variant="quiet" className="self-start" onClick={() => finished.forEach((item) => onDismiss(item.key))}>
              Clear {finished.length} finished
            </Button>
          )}
        </>
      )}
    </div>
  );
}

function isFinished(item: UploadItem, clips: Clip[] | undefined): boolean {
  if (item.state === 'cancelled' || item.state === 'failed') return true;
  if (item.state !== 'sent') return false;
  const clip = clips?.find((c) => c.id === item.clipId);
  return !clip || clip.status === 'ready' || clip.status === 'failed';
}

function UploadRow({
  item,
  clip,
  onPause,
  onResume,
  onCancel,
  onRetry,
  onDismiss,
  onOpen,
}: {
  item: UploadItem;
  clip: Clip | undefined;
  onPause: () => void;
  onResume: () => void;
  onCancel: () => void;
  onRetry: () => void;
  onDismiss: () => void;
  onOpen: (clipId: number) => void;
}) {
  const name = item.file.name;
  const total = item.total ?? item.file.size;
  const percent = total > 0 ? (item.loaded / total) * 100 : null;
  // Every byte is out but no answer yet: the server is reading the file to see what it is.
  const checking = item.state === 'uploading' && total > 0 && item.loaded >= total;
  const { bytesPerSecond, secondsLeft } = item.rate;
  const paceParts = [bytesPerSecond ? formatSpeed(bytesPerSecond) : null, secondsLeft !== null ? formatTimeLeft(secondsLeft) : null].filter((p): p is string => p !== null);
  const pace = paceParts.join(', ');
  const amount = `${formatBytes(item.loaded)} of ${formatBytes(total)}`;

  return (
    <li className="flex flex-col gap-1.5 px-3 py-2 text-sm">
      <div className="flex items-baseline justify-between gap-2">
        <span className="min-w-0 truncate font-medium" title={name}>
          {name}
        </span>
        <span className="figures shrink-0 text-xs text-ink-muted">{formatBytes(item.file.size)}</span>
      </div>

      {item.state === 'queued' && (
        <Row status="Waiting for the file above to finish uploading.">
          <Button size="sm" variant="quiet" onClick={onCancel} aria-label={`Cancel upload of ${name}`}>
            Cancel
          </Button>
        </Row>
      )}

      {(item.state === 'uploading' || item.state === 'retrying' || item.state === 'offline' || item.state === 'paused') && (
        <div className="flex flex-col gap-1">
          <div className="flex items-center gap-2">
            <Progress
              className="flex-1"
              value={checking ? null : percent}
              label={`Upload of ${name}`}
              valueText={
                checking
                  ? 'Sent; the server is checking the file'
                  : percent === null
                    ? 'Uploading'
                    : `${Math.floor(percent)} %, ${amount}${pace ? `, ${pace}` : ''}`
              }
            >
              {checking ? 'Sent, checking…' : percent === null ? 'Uploading…' : `${Math.floor(percent)} %`}
            </Progress>
            {item.state === 'paused' ? (
              <Button size="sm" variant="secondary" onClick={onResume} aria-label={`Resume upload of ${name}`}>
                Resume
              </Button>
            ) : item.state === 'offline' ? (
              <Button size="sm" variant="secondary" onClick={onResume} aria-label={`Try the upload of ${name} now`}>
                Try now
              </Button>
            ) : (
              !checking && (
                <Button size="sm" variant="secondary" onClick={onPause} aria-label={`Pause upload of ${name}`}>
                  Pause
                </Button>
              )
            )}
            {!checking && (
              <Button size="sm" variant="quiet" onClick={onCancel} aria-label={`Cancel upload of ${name}`}>
                Cancel
              </Button>
            )}
          </div>
          <p role="status" className="text-xs text-ink-muted">
            {item.state === 'paused'
              ? `Paused at ${amount}. The server keeps what it has; resume when you are ready.`
              : item.state === 'retrying' || item.state === 'offline'
                ? item.error
                : checking
                  ? 'Every byte is here; the server is checking the file.'
                  : [amount, ...paceParts].map((part, i) => (
                      <span key={part} className="figures whitespace-nowrap">
                        {i > 0 && ' · '}
                        {part}
                      </span>
                    ))}
          </p>
        </div>
      )}

      {item.state === 'sent' &&
        (clip ? (
          <div className="flex flex-wrap items-center justify-between gap-2">
            <ClipStatusBadge clip={clip} className="min-w-40 flex-1" />
            <span className="flex gap-1">
              {clip.status === 'ready' && (
                <Button size="sm" variant="secondary" onClick={() => onOpen(clip.id)}>
                  Open in player
                </Button>
              )}
              {(clip.status === 'ready' || clip.status === 'failed') && (
                <Button size="sm" variant="quiet" onClick={onDismiss} aria-label={`Dismiss ${name} from the uploads`}>
                  Dismiss
                </Button>
              )}
            </span>
          </div>
        ) : (
          <Row status="Uploaded.">
            <Button size="sm" variant="quiet" onClick={onDismiss} aria-label={`Dismiss ${name} from the uploads`}>
              Dismiss
            </Button>
          </Row>
        ))}

      {item.state === 'failed' && (
        <div className="flex flex-col gap-1.5">
          <p role="alert" className="text-xs text-danger">
            Not uploaded: {item.error}
          </p>
          <span className="flex gap-1">
            <Button size="sm" variant="secondary" onClick={onRetry} aria-label={`Try uploading ${name} again`}>
              Try again
            </Button>
            <Button size="sm" variant="quiet" onClick={onDismiss} aria-label={`Dismiss ${name} from the uploads`}>
              Dismiss
            </Button>
          </span>
        </div>
      )}

      {item.state === 'cancelled' && (
        <Row status="Cancelled.">
          <Button size="sm" variant="quiet" onClick={onRetry} aria-label={`Upload ${name} after all`}>
            Upload after all
          </Button>
          <Button size="sm" variant="quiet" onClick={onDismiss} aria-label={`Dismiss ${name} from the uploads`}>
            Dismiss
          </Button>
        </Row>
      )}
    </li>
  );
}

function Row({ status, children }: { status: string; children: ReactNode }) {
  return (
    <div className="flex flex-wrap items-center justify-between gap-2">
      <span className="text-xs text-ink-muted">{status}</span>
      <span className="flex gap-1">{children}</span>
    </div>
  );
}
