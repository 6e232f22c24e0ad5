import path from 'node:path';
import { localStorage } from './local-storage';
import { s3Storage, type S3StorageOptions } from './s3-storage';
import { withSizeGuard } from './size-guard';
import type { Storage } from './storage';

/** The storage part of the Config: which driver, and what it needs. */
export interface StorageSettings {
  driver: 'local' | 's3';
  /** Local driver: the store itself. S3 driver: only scratch work, under `<mediaDir>/.scratch`. */
  mediaDir: string;
  /** The size guard (see size-guard.ts): the store's cap (0 = none) and the local disk's free-space floor. */
  maxBytes?: number;
  minFreeBytes?: number;
  /** Required when `driver` is "s3". */
  s3?: Omit<S3StorageOptions, 'scratchDir' | 'partSize' | 'listPageSize'>;
}

/** Builds the configured Storage, behind its size guard; local disk unless the settings ask for S3. */
export function storageFromConfig(settings: StorageSettings): Storage {
  const guard = { maxBytes: settings.maxBytes ?? 0, minFreeBytes: settings.minFreeBytes ?? 0 };
  if (settings.driver === 'local') {
    return withSizeGuard(localStorage(settings.mediaDir), { ...guard, diskDir: settings.mediaDir });
  }
  if (!settings.s3?.bucket) throw new Error('The S3 storage driver needs a bucket (S3_BUCKET).');
  // Same scratch folder as the local driver, so uploads in progress land in the same place.
  // The free-space floor is the bucket's business; the cap holds for it too.
  return withSizeGuard(s3Storage({ ...settings.s3, scratchDir: path.join(settings.mediaDir, '.scratch') }), { maxBytes: guard.maxBytes, minFreeBytes: 0 });
}
