import crypto from 'node:crypto';
import { Clip } from '../clips/clip.model';

/*
 * Versioned public media addresses. A ready clip's files (its playable copy, poster and evidence
 * stills) are written once under its storage prefix and never change, so an address that names
 * that prefix's version can be kept by any cache for a year: `?v=<version>` makes it immutable.
 * The version is a hash, so the storage layout is not shown. A taken-down story's media is
 * refused by this server at once; a CDN in front keeps what it already has until it is purged
 * (README, "Many servers").
 */

/** Length of a version: 12 hex digits of SHA-256 (48 bits; collisions only matter within one clip's id). */
const VERSION_LENGTH = 12;

/** The version of a clip's public media. */
export function mediaVersion(clip: Pick<Clip, 'id' | 'storagePrefix'>): string {
  return crypto.createHash('sha256').update(`${clip.id}:${clip.storagePrefix}`).digest('hex').slice(0, VERSION_LENGTH);
}

/** The versions of some clips' media, by clip id. */
export async function mediaVersions(clipIds: Iterable<number>): Promise<Map<number, string>> {
  const ids = [...new Set(clipIds)];
  if (ids.length === 0) return new Map();
  const clips = await Clip.findAll({ where: { id: ids }, attributes: ['id', 'storagePrefix'] });
  return new Map(clips.map((c) => [c.id, mediaVersion(c)]));
}

/** A public media address with its clip's version added (`?v=` or `&v=`); unchanged when the version is unknown. */
export function versioned(url: string, version: string | undefined): string {
  if (!version) return url;
  return `${url}${url.includes('?') ? '&' : '?'}v=${version}`;
}

/** Cache-Control for a public media answer: immutable for a year when the address names the current version. */
export function mediaCacheControl(given: string | undefined, current: string, otherwise: string): string {
  return given === current ? 'public, max-age=31536000, immutable' : otherwise;
}
