import fsp from 'node:fs/promises';
import type { Storage } from './storage';

export interface SizeGuardOptions {
  /** The most the whole store may hold, bytes; 0 for no cap. */
  maxBytes: number;
  /**
   * Local disk only: the free space a write must leave on the disk under `diskDir`, bytes, so
   * media never takes the last room the database and the system need. 0 to skip.
   */
  minFreeBytes: number;
  /** A folder on the disk the store writes to (the local store's root); unset for S3. */
  diskDir?: string;
  /** How long a full count of the store is trusted before it is taken again, ms. */
  recountMs?: number;
}

/**
 * Refusal of a write that would take the store past its cap or the disk below its floor. Its
 * `code` is the errno of a full disk quota, so every route already answers it with 507
 * `storage_full` and the same words as a full disk.
 */
export class MediaStoreFull extends Error {
  readonly code = 'EDQUOT';
  constructor(message: string) {
    super(message);
    this.name = 'MediaStoreFull';
  }
}

/**
 * The store with a size guard on every write: a file is put only when the store stays under
 * `maxBytes` and the disk keeps `minFreeBytes` free. The store's size is counted once (a full
 * listing), then kept up to date by this process's own puts and deletes, and counted again every
 * `recountMs` so writes by other processes (a separate worker, another server) are caught up.
 */
export function withSizeGuard(inner: Storage, opts: SizeGuardOptions): Storage & { usedBytes(): Promise<number> } {
  const recountMs = opts.recountMs ?? 10 * 60_000;
  let used: number | null = null;
  let countedAt = 0;
  let counting: Promise<number> | null = null;

  const usedBytes = async (): Promise<number> => {
    if (used !== null && Date.now() - countedAt < recountMs) return used;
    counting ??= inner
      .list('')
      .then((objects) => {
        used = objects.reduce((sum, o) => sum + o.size, 0);
        countedAt = Date.now();
        return used;
      })
      .finally(() => {
        counting = null;
      });
    return counting;
  };
  const adjust = (delta: number) => {
    if (used !== null) used = Math.max(0, used + delta);
  };

  /** `size` is what the write brings; `replaced` what it takes the place of under the same key. */
  const check = async (size: number, replaced: number) => {
    if (opts.minFreeBytes > 0 && opts.diskDir) {
      const disk = await fsp.statfs(opts.diskDir);
      const free = disk.bavail * disk.bsize;
      if (free - size < opts.minFreeBytes) {
        throw new MediaStoreFull(`writing ${size} bytes would leave ${free - size} bytes free, under the floor of ${opts.minFreeBytes}`);
      }
    }
    if (opts.maxBytes > 0) {
      const now = await usedBytes();
      if (now - replaced + size > opts.maxBytes) {
        throw new MediaStoreFull(`the store holds ${now} bytes; ${size} more would pass its cap of ${opts.maxBytes}`);
      }
    }
  };

  return {
    ...inner,
    async putFile(key, localPath, putOpts) {
      const { size } = await fsp.stat(localPath);
      const before = opts.maxBytes > 0 ? ((await inner.stat(key))?.size ?? 0) : 0;
      await check(size, before);
      await inner.putFile(key, localPath, putOpts);
      adjust(size - before);
    },
    async delete(key) {
      const before = used !== null ? ((await inner.stat(key))?.size ?? 0) : 0;
      await inner.delete(key);
      adjust(-before);
    },
    async deletePrefix(prefix) {
      const gone = used !== null ? (await inner.list(prefix)).reduce((sum, o) => sum + o.size, 0) : 0;
      await inner.deletePrefix(prefix);
      adjust(-gone);
    },
    usedBytes,
  };
}
