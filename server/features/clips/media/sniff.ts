import fsp from 'node:fs/promises';
import { MediaCommandFailed } from './ffmpeg-run';

/** Containers the first gate lets through; ffprobe decides the rest. */
export type VideoContainer = 'mp4' | 'mov' | 'm4v' | '3gp' | 'matroska' | 'webm' | 'avi' | 'mpegts' | 'mpeg' | 'flv' | 'ogg' | 'asf';

/** Bytes of the file's start that sniffing needs (MPEG-TS wants several 188/192-byte packets). */
export const SNIFF_BYTES = 4096;

/** The first `bytes` bytes of a file (fewer if it is shorter). */
export async function readHead(file: string, bytes = SNIFF_BYTES): Promise<Buffer> {
  const fh = await fsp.open(file, 'r');
  try {
    const buf = Buffer.alloc(bytes);
    const { bytesRead } = await fh.read(buf, 0, bytes, 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await fh.close();
  }
}

// ISO BMFF brands that are still images or audio, not video (HEIC/AVIF photos, M4A songs).
const NOT_VIDEO_BRANDS = new Set(['heic', 'heix', 'heim', 'heis', 'hevc', 'hevx', 'mif1', 'msf1', 'avif', 'avis', 'M4A ', 'M4B ', 'M4P ']);
// Old QuickTime files start with an atom other than ftyp.
const QUICKTIME_FIRST_ATOMS = new Set(['moov', 'mdat', 'wide', 'free', 'skip', 'pnot']);
const ASF_GUID = Buffer.from('3026b2758e66cf11a6d900aa0062ce6c', 'hex');

/**
 * The video container a file's first bytes announce (magic numbers, never the name or the
 * browser's type), or null. The first gate: HTML, scripts, archives and images renamed `.mp4`
 * stop here before any decoder sees them.
 */
export function sniffContainer(head: Buffer): VideoContainer | null {
  if (head.length < 12) return null;
  const at4 = head.toString('latin1', 4, 8);
  if (at4 === 'ftyp' && head.readUInt32BE(0) >= 12) {
    const brand = head.toString('latin1', 8, 12);
    if (NOT_VIDEO_BRANDS.has(brand)) return null;
    if (brand === 'qt  ') return 'mov';
    if (brand.startsWith('M4V')) return 'm4v';
    if (brand.startsWith('3gp') || brand.startsWith('3g2')) return '3gp';
    return 'mp4';
  }
  if (QUICKTIME_FIRST_ATOMS.has(at4) && head.readUInt32BE(0) >= 8) return 'mov';
  if (head.readUInt32BE(0) === 0x1a45dfa3) {
    // The EBML header is short and names its DocType early: "webm" or "matroska".
    return head.subarray(0, 64).includes('webm', 0, 'latin1') ? 'webm' : 'matroska';
  }
  if (head.toString('latin1', 0, 4) === 'RIFF' && head.toString('latin1', 8, 12) === 'AVI ') return 'avi';
  if (syncEvery(head, 0, 188) || syncEvery(head, 4, 192)) return 'mpegts';
  if (head.readUInt32BE(0) === 0x000001ba) return 'mpeg';
  if (head.toString('latin1', 0, 3) === 'FLV' && head[3] === 1) return 'flv';
  if (head.toString('latin1', 0, 4) === 'OggS') return 'ogg';
  if (head.length >= 16 && head.subarray(0, 16).equals(ASF_GUID)) return 'asf';
  return null;
}

// ffmpeg's demuxer for each container (`ffmpeg -demuxers`): one reads the ISO BMFF family, one
// both Matroska and WebM, and mpegts reads M2TS too.
const DEMUXERS: Record<VideoContainer, string> = {
  mp4: 'mov',
  mov: 'mov',
  m4v: 'mov',
  '3gp': 'mov',
  matroska: 'matroska',
  webm: 'matroska',
  avi: 'avi',
  mpegts: 'mpegts',
  mpeg: 'mpeg',
  flv: 'flv',
  ogg: 'ogg',
  asf: 'asf',
};

/** Every demuxer a sniffed container may be read with: the probe's `-format_whitelist`. */
export const VIDEO_DEMUXERS: readonly string[] = [...new Set(Object.values(DEMUXERS))];

/** The ffmpeg demuxer for a container sniffContainer named (as stored with a clip), or null. */
export function demuxerFor(container: string): string | null {
  return Object.hasOwn(DEMUXERS, container) ? DEMUXERS[container as VideoContainer] : null;
}

/**
 * `-f <demuxer>` for an input: from `container` when the caller knows it (the probe stored it
 * with the clip), else from the file's own first bytes, the same test the probe starts with.
 * Pinned so ffmpeg never guesses the format again and cannot be steered to a playlist or
 * concatenation demuxer. Throws MediaCommandFailed ("Could not <what>: …") when neither names
 * a container we read.
 */
export async function inputFormatArgs(file: string, container: string | undefined, what: string): Promise<string[]> {
  let known = container ?? null;
  if (known == null) {
    try {
      known = sniffContainer(await readHead(file));
    } catch (err) {
      const code = (err as NodeJS.ErrnoException).code ?? 'unreadable';
      throw new MediaCommandFailed(`Could not ${what}: the file could not be read (${code}).`, '', null);
    }
  }
  const demuxer = known == null ? null : demuxerFor(known);
  if (!demuxer) throw new MediaCommandFailed(`Could not ${what}: the file is not in a video container Benchproof reads.`, '', null);
  return ['-f', demuxer];
}

/** MPEG-TS (188-byte packets) or M2TS/AVCHD (192, with a 4-byte timestamp first): 0x47 at every packet start. */
function syncEvery(head: Buffer, offset: number, packet: number): boolean {
  const packets = Math.floor((head.length - offset) / packet);
  if (packets < 3) return false;
  for (let i = 0; i < packets; i++) if (head[offset + i * packet] !== 0x47) return false;
  return true;
}

/**
 * What a file that is not a video looks like, for the refusal message ("an HTML page",
 * "a ZIP archive"…). Guesses from magic bytes only.
 */
export function describeNonVideo(head: Buffer): string {
  if (head.length === 0) return 'an empty file';
  const ascii = head.toString('latin1', 0, 16);
  if (head.length >= 12 && head.toString('latin1', 4, 8) === 'ftyp') {
    const brand = head.toString('latin1', 8, 12);
    if (brand.startsWith('M4')) return 'an audio file (M4A)';
    return 'a HEIC or AVIF photo';
  }
  if (ascii.startsWith('PK\x03\x04') || ascii.startsWith('PK\x05\x06')) return 'a ZIP archive or an Office document';
  if (head[0] === 0xff && head[1] === 0xd8 && head[2] === 0xff) return 'a JPEG photo';
  if (ascii.startsWith('\x89PNG')) return 'a PNG image';
  if (ascii.startsWith('GIF8')) return 'a GIF image';
  if (ascii.startsWith('%PDF')) return 'a PDF document';
  if (ascii.startsWith('RIFF') && ascii.slice(8, 12) === 'WAVE') return 'an audio file (WAV)';
  if (ascii.startsWith('RIFF') && ascii.slice(8, 12) === 'WEBP') return 'a WebP image';
  if (ascii.startsWith('ID3') || (head[0] === 0xff && ((head[1] ?? 0) & 0xe0) === 0xe0)) return 'an audio file (MP3)';
  if (ascii.startsWith('\x1f\x8b')) return 'a compressed archive (gzip)';
  if (ascii.startsWith('Rar!') || ascii.startsWith('7z\xbc\xaf')) return 'a compressed archive';
  if (ascii.startsWith('\x7fELF') || ascii.startsWith('MZ')) return 'a program';
  const text = head.toString('utf8', 0, Math.min(head.length, 1024)).replace(/^\uFEFF/, '').trimStart().toLowerCase();
  if (/^<(!doctype html|html|head|body|script|iframe|div|meta|!--)/.test(text)) return 'an HTML page';
  if (/^<(\?xml|svg)/.test(text)) return 'an XML or SVG file';
  if (!head.subarray(0, 1024).includes(0)) return 'a text or script file';
  return 'a file of an unknown type';
}
