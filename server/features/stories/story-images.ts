import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Router, type RequestHandler } from 'express';
import multer from 'multer';
import { literal } from 'sequelize';
import {
  storyIdParamsSchema,
  storyImageAltField,
  storyImageIdParamsSchema,
  storyImageUploadField,
  type StoryImage as StoryImageDto,
} from '@shared/stories/story.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { AppError, badRequest, conflict, notFound, unauthorized } from '../../http/errors';
import { multipartFailure, refuseNulInUpload } from '../../http/multipart';
import { limiter } from '../../http/rate-limit';
import { validate } from '../../http/validate';
import type { Storage } from '../../storage/storage';
import { MediaCommandFailed, runFfmpeg, runFfprobe } from '../clips/media/ffmpeg-run';
import { describeNonVideo, readHead } from '../clips/media/sniff';
import { PUBLIC_STORY_SQL } from '../public/publication';
import type { User } from '../users/user.model';
import { MalformedImageError, stripImageMetadata } from './image-metadata';
import { imagePrefix, storyForOwner, storyForViewer } from './stories.service';
import { Story, StoryImage } from './story.model';

/** Most images one story holds, so its image list stays one bounded page. */
export const MAX_IMAGES_PER_STORY = 100;
/** Most pixels decoded from one upload: a phone's largest photos, not a decompression bomb. */
export const MAX_IMAGE_PIXELS = 100_000_000;
const MAX_ALT = 300;

type ImageType = 'image/jpeg' | 'image/png' | 'image/webp';

const imageFormats: Readonly<Record<ImageType, { ext: string; codec: string; name: string }>> = {
  'image/jpeg': { ext: 'jpg', codec: 'mjpeg', name: 'JPEG' },
  'image/png': { ext: 'png', codec: 'png', name: 'PNG' },
  'image/webp': { ext: 'webp', codec: 'webp', name: 'WebP' },
};

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

/** The image type a file's first bytes announce (never its name or the browser's type), or null. */
export function sniffImage(head: Buffer): ImageType | null {
  if (head.length >= 3 && head[0] === 0xff && head[1] === 0xd8 && head[2] === 0xff) return 'image/jpeg';
  if (head.length >= 8 && head.subarray(0, 8).equals(PNG_SIGNATURE)) return 'image/png';
  if (head.length >= 12 && head.toString('latin1', 0, 4) === 'RIFF' && head.toString('latin1', 8, 12) === 'WEBP') return 'image/webp';
  return null;
}

function damaged(detail: string) {
  return new AppError(422, 'damaged_image', `This image is damaged or incomplete: ${detail}. Save or export it again and upload the new copy.`, [
    { path: storyImageUploadField, message: 'damaged or incomplete' },
  ]);
}

/**
 * Width and height from ffprobe, then one full decode: ffprobe reads only headers, so a file cut
 * short passes it, while the decoder reports the missing data on stderr (and for PNG fails).
 */
async function probeImage(file: string, type: ImageType): Promise<{ width: number; height: number }> {
  let streams: { codec_type?: string; codec_name?: string; width?: number; height?: number }[];
  try {
    const { stdout } = await runFfprobe(['-v', 'error', '-print_format', 'json', '-show_streams', file], { what: 'read the image' });
    streams = (JSON.parse(stdout.toString('utf8')) as { streams?: typeof streams }).streams ?? [];
  } catch (err) {
    if (err instanceof MediaCommandFailed) throw damaged('it could not be read');
    throw err;
  }
  const video = streams.filter((s) => s.codec_type === 'video');
  const stream = video[0];
  if (video.length !== 1 || !stream || stream.codec_name !== imageFormats[type].codec) {
    throw damaged(`it starts like a ${imageFormats[type].name} image but does not read as one`);
  }
  const width = Number(stream.width);
  const height = Number(stream.height);
  if (!(width > 0 && height > 0)) throw damaged('it has no picture size, so it was probably cut short');
  if (width * height > MAX_IMAGE_PIXELS) {
    throw new AppError(422, 'image_too_large', `This image is ${width} × ${height} pixels; the most a story takes is ${MAX_IMAGE_PIXELS / 1e6} million pixels. Scale it down and upload it again.`, [
      { path: storyImageUploadField, message: `more than ${MAX_IMAGE_PIXELS / 1e6} million pixels` },
    ]);
  }
  try {
    const { stderr } = await runFfmpeg(['-v', 'error', '-i', file, '-map', '0:v:0', '-frames:v', '1', '-f', 'null', '-'], { what: 'decode the image' });
    if (stderr.trim().length > 0) throw damaged('its picture data stops early or is corrupt');
  } catch (err) {
    if (err instanceof MediaCommandFailed) throw damaged('its picture data could not be decoded');
    throw err;
  }
  return { width, height };
}

function imageUrl(id: number): string {
  return `/api/story-images/${id}`;
}

/** `![alt](url)` with the alt text made safe for Markdown (no brackets or line breaks breaking out). */
export function imageMarkdown(alt: string, url: string): string {
  const text = alt.replace(/\s+/g, ' ').replace(/[\\[\]]/g, '\\$&');
  return `![${text}](${url})`;
}

function toDto(image: StoryImage): StoryImageDto {
  const url = imageUrl(image.id);
  return {
    id: image.id,
    storyId: image.storyId,
    url,
    contentType: image.contentType,
    sizeBytes: image.sizeBytes,
    width: image.width ?? null,
    height: image.height ?? null,
    alt: image.alt,
    markdown: imageMarkdown(image.alt, url),
  };
}

/** Text without control characters (a file name is shown back to its builder, never used as a path). */
function printable(text: string): string {
  return [...text].filter((c) => c >= ' ' && c !== '\u007f').join('');
}

/** What multer handed over: a file in the scratch folder, not yet trusted. */
interface IncomingFile {
  path: string;
  originalname: string;
  size: number;
}

/**
 * Writes a copy of `file` without its metadata (GPS, camera serials, XMP, IPTC, comments) to `out`
 * and returns its size. The pixels are not re-encoded (see image-metadata.ts); the copy is what
 * gets probed and stored, so the upload is decoded once.
 */
async function writeStrippedCopy(file: string, type: ImageType, out: string): Promise<number> {
  let stripped: Buffer;
  try {
    stripped = stripImageMetadata(await fsp.readFile(file), type);
  } catch (err) {
    if (err instanceof MalformedImageError) throw damaged(err.message);
    throw err;
  }
  await fsp.writeFile(out, stripped, { flag: 'wx' });
  return stripped.length;
}

/**
 * Checks an uploaded image by its bytes, removes its metadata and files it under a generated
 * key. The scratch files are deleted whatever happens (the stripped copy is moved into storage on
 * success), so a refusal leaves nothing behind.
 */
export async function acceptStoryImage(storage: Storage, story: Story, user: User, file: IncomingFile, altInput: unknown): Promise<StoryImageDto> {
  const strippedPath = path.join(path.dirname(file.path), `${crypto.randomUUID()}.stripped`);
  try {
    if (altInput !== undefined && typeof altInput !== 'string') {
      throw badRequest('Send the alt text as plain text.', [{ path: storyImageAltField, message: 'must be text' }]);
    }
    const alt = (altInput ?? '').replace(/\s+/g, ' ').trim();
    if (alt.length > MAX_ALT) throw badRequest(`The alt text is at most ${MAX_ALT} characters.`, [{ path: storyImageAltField, message: `at most ${MAX_ALT} characters` }]);
    if (file.size === 0) {
      throw new AppError(400, 'empty_file', 'The file is empty (0 bytes). Choose the image again.', [{ path: storyImageUploadField, message: 'empty' }]);
    }
    const head = await readHead(file.path);
    const type = sniffImage(head);
    if (!type) {
      throw new AppError(415, 'not_an_image', `This file is not a JPEG, PNG or WebP image (it looks like ${describeNonVideo(head)}). Upload a photo or a screenshot in one of those formats.`, [
        { path: storyImageUploadField, message: 'not a JPEG, PNG or WebP image' },
      ]);
    }
    const sizeBytes = await writeStrippedCopy(file.path, type, strippedPath);
    const { width, height } = await probeImage(strippedPath, type);
    const key = `stories/${crypto.randomUUID()}/image.${imageFormats[type].ext}`;
    const image = await Story.sequelize!.transaction(async (transaction) => {
      // The story row is the lock: parallel uploads count one at a time.
      await Story.findByPk(story.id, { transaction, lock: transaction.LOCK.UPDATE });
      const count = await StoryImage.count({ where: { storyId: story.id }, transaction });
      if (count >= MAX_IMAGES_PER_STORY) {
        throw conflict(`This story already has ${count} images, the most one story holds. Remove an image first.`, 'too_many_images');
      }
      return StoryImage.create(
        {
          storyId: story.id,
          storageKey: key,
          contentType: type,
          sizeBytes,
          width,
          height,
          // Kept for the builder's own reference only; never part of a key or a path.
          originalName: printable(path.basename(file.originalname)).slice(0, 255),
          alt,
          createdBy: user.id,
        },
        { transaction },
      );
    });
    try {
      await storage.putFile(key, strippedPath, { contentType: type, readOnly: true });
    } catch (err) {
      await image.destroy();
      await storage.deletePrefix(imagePrefix(key));
      throw err;
    }
    return toDto(image);
  } finally {
    await fsp.rm(file.path, { force: true });
    await fsp.rm(strippedPath, { force: true });
  }
}

export async function listStoryImages(story: Story): Promise<StoryImageDto[]> {
  const rows = await StoryImage.findAll({ where: { storyId: story.id }, order: [['id', 'ASC']], limit: MAX_IMAGES_PER_STORY });
  return rows.map(toDto);
}

function tooLarge(max: number) {
  const mib = max / 1024 ** 2;
  const size = mib >= 1 ? `${Number.isInteger(mib) ? mib : mib.toFixed(1)} MiB` : `${Math.max(1, Math.round(max / 1024))} KiB`;
  return new AppError(413, 'too_large', `The image is larger than the ${size} a story image may be. Save it smaller (a photo of 2000 pixels across is plenty) and upload it again.`, [
    { path: storyImageUploadField, message: `larger than ${size}` },
  ]);
}

export interface StoryImageRouteDeps {
  config: Config;
  storage: Storage;
}

/** Routes under /api/stories/:storyId/images: upload and list. */
export function storyImagesRouter(deps: StoryImageRouteDeps) {
  const router = Router();
  const maxBytes = deps.config.uploads.maxImageBytes;
  const incoming = path.join(deps.storage.scratchDir(), 'incoming');
  const upload = multer({
    storage: multer.diskStorage({
      destination: (_req, _file, cb) =>
        fsp.mkdir(incoming, { recursive: true }).then(
          () => cb(null, incoming),
          (err: Error) => cb(err, incoming),
        ),
      // Our own name: nothing of the uploader's file name reaches the disk.
      filename: (_req, _file, cb) => cb(null, `${crypto.randomUUID()}.upload`),
    }),
    limits: { fileSize: maxBytes, files: 1, fields: 2, fieldSize: 2000, parts: 3 },
  }).single(storyImageUploadField);

  const receive: RequestHandler = (req, res, next) => {
    const declared = Number(req.headers['content-length'] ?? 0);
    if (declared > maxBytes + 64 * 1024) return next(tooLarge(maxBytes));
    upload(req, res, (err: unknown) => {
      if (!err) {
        refuseNulInUpload(req, storyImageUploadField).then((refused) => next(refused ?? undefined), next);
        return;
      }
      if (err instanceof multer.MulterError && err.code === 'LIMIT_FILE_SIZE') return next(tooLarge(maxBytes));
      next(multipartFailure(err, `Send one image in the field "${storyImageUploadField}" and optional text in "${storyImageAltField}".`, storyImageUploadField));
    });
  };

  router.get('/:storyId/images', access.signedIn, validate({ params: storyIdParamsSchema }), async (req, res) => {
    const { story } = await storyForViewer(Number(req.params.storyId), req.user);
    res.json({ items: await listStoryImages(story) });
  });

  router.post(
    '/:storyId/images',
    access.role('builder'),
    limiter({ windowMs: 60_000, limit: deps.config.uploads.ratePerMinute, message: 'Too many uploads from here. Wait a minute and try again.' }),
    validate({ params: storyIdParamsSchema }),
    async (req, res, next) => {
      // Checked before a byte is written: only the builder of the story's build may upload to it.
      const { story } = await storyForOwner(Number(req.params.storyId), req.user);
      res.locals.story = story;
      next();
    },
    receive,
    async (req, res) => {
      if (!req.file) {
        throw badRequest(`No file arrived. Send the image in the form field "${storyImageUploadField}".`, [{ path: storyImageUploadField, message: 'missing' }]);
      }
      const body = (req.body ?? {}) as Record<string, unknown>;
      const image = await acceptStoryImage(deps.storage, res.locals.story as Story, req.user!, req.file, body[storyImageAltField]);
      res.status(201).json({ image });
    },
  );

  return router;
}

/** How long a reader's browser or a shared cache may keep a published image (seconds). */
export const PUBLIC_IMAGE_MAX_AGE = 300;

/** A story image, and whether a current publication shows it. */
export interface ImageLookup {
  image: StoryImage;
  published: boolean;
}

/**
 * The image with this id and whether it is public, in one query. An image is public when its own
 * story has a current publication (`PUBLIC_STORY_SQL`: published, not withdrawn) whose Markdown
 * body references it as `/api/story-images/<id>` (not followed by another digit, so image 12 is
 * not made public by a reference to 123). Only the publication counts: an image that only the
 * draft or a later unpublished revision uses stays private, and withdrawing the story makes its
 * images private again. Every join is on a primary key, so no index is needed.
 */
export async function findStoryImage(imageId: number): Promise<ImageLookup | null> {
  const image = await StoryImage.findByPk(imageId, {
    attributes: {
      include: [
        [
          literal(`EXISTS (
            SELECT 1 FROM stories s JOIN story_publications p ON p.id = s.published_publication_id
            WHERE s.id = "StoryImage"."story_id" AND ${PUBLIC_STORY_SQL}
              AND p.body ~ ('/api/story-images/' || "StoryImage"."id" || '(?![0-9])')
          )`),
          'published',
        ],
      ],
    },
  });
  if (!image) return null;
  return { image, published: image.get('published') === true };
}

/**
 * Routes under /api/story-images/:imageId: the image itself. Anyone, signed in or not, gets an
 * image a current publication shows (`findStoryImage`); any other image only those who may read
 * its story get (401 to a visitor, whether or not the id exists; 404 to the signed-in who may not).
 */
export function storyImageFilesRouter(deps: { storage: Storage }) {
  const router = Router();
  router.get('/:imageId', access.public, validate({ params: storyImageIdParamsSchema }), async (req, res) => {
    const found = await findStoryImage(Number(req.params.imageId));
    if (!found?.published) {
      if (!req.user) throw unauthorized();
      if (!found) throw notFound('There is no image with that id.');
      await storyForViewer(found.image.storyId, req.user).catch((err: unknown) => {
        throw err instanceof AppError && err.status === 404 ? notFound('There is no image with that id.') : err;
      });
    }
    res.set({
      // A withdrawn story's images turn private at once here; a shared cache may keep one this long.
      'Cache-Control': found.published ? `public, max-age=${PUBLIC_IMAGE_MAX_AGE}` : 'private, max-age=3600',
      'X-Content-Type-Options': 'nosniff',
      'Content-Disposition': 'inline',
    });
    await deps.storage.send(res, found.image.storageKey, { contentType: found.image.contentType });
  });
  return router;
}
