import path from 'node:path';
import { localStorage } from './local-storage';
import { s3Storage, type S3StorageOptions } from './s3-storage';
import type { Storage } from './storage';

/** The storage part of the Config: which driver, and what it needs. */
export interface StorageSettings {
  driver: 'local' | 's3';
  /** Local driver: the store itself. S3 driver: only scratch work, under `<mediaDir>/.scratch`. */
  mediaDir: string;
  /** Required when `driver` is "s3". */
  s3?: Omit<S3StorageOptions, 'scratchDir' | 'partSize' | 'listPageSize'>;
}

/** Builds the configured Storage; local disk unless the settings ask for S3. */
export function storageFromConfig(settings: StorageSettings): Storage {
  if (settings.driver === 'local') return localStorage(settings.mediaDir);
  if (!settings.s3?.bucket) throw new Error('The S3 storage driver needs a bucket (S3_BUCKET).');
  // Same scratch folder as the local driver, so uploads in progress land in the same place.
  return s3Storage({ ...settings.s3, scratchDir: path.join(settings.mediaDir, '.scratch') });
}
