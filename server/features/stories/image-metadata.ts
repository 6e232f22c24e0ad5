/**
 * Removes the metadata a camera or editor writes into an image (GPS position, camera serial
 * numbers, XMP, IPTC, comments, timestamps) by rewriting the container around the compressed
 * picture data, which is copied byte for byte: nothing is decoded or re-encoded, so the pixels
 * readers see are exactly the ones the builder uploaded.
 */

export type MetadataImageType = 'image/jpeg' | 'image/png' | 'image/webp';

/** The container is broken (a length runs past the end, a required part is missing). */
export class MalformedImageError extends Error {
  constructor(detail: string) {
    super(detail);
    this.name = 'MalformedImageError';
  }
}

/** `bytes` without metadata. Throws MalformedImageError when the container does not hold together. */
export function stripImageMetadata(bytes: Buffer, type: MetadataImageType): Buffer {
  switch (type) {
    case 'image/jpeg':
      return stripJpeg(bytes);
    case 'image/png':
      return stripPng(bytes);
    case 'image/webp':
      return stripWebp(bytes);
  }
}

// ---------------------------------------------------------------------------------------------
// JPEG

const SOI = 0xd8;
const EOI = 0xd9;
const SOS = 0xda;
const APP0 = 0xe0;
const APP1 = 0xe1;
const APP2 = 0xe2;
const APP13 = 0xed;
const COM = 0xfe;
const TEM = 0x01;

const EXIF_ID = Buffer.from('Exif\0\0', 'latin1');
const XMP_ID = Buffer.from('http://ns.adobe.com/xap/1.0/\0', 'latin1');
const XMP_EXTENSION_ID = Buffer.from('http://ns.adobe.com/xmp/extension/\0', 'latin1');
const MPF_ID = Buffer.from('MPF\0', 'latin1');
const ORIENTATION_TAG = 0x0112;
const TIFF_SHORT = 3;

const isRst = (marker: number) => marker >= 0xd0 && marker <= 0xd7;

/**
 * JPEG: walks the marker segments from SOI to the primary image's EOI.
 *
 * Dropped: APP1 Exif (GPS, camera make/model/serial, dates, the embedded thumbnail), APP1 XMP and
 * extended XMP, APP13 (image resource blocks carrying IPTC captions, credits and places), COM
 * (free text), APP2 MPF (the index of further pictures) and every byte after the EOI (phones
 * append those further pictures there, each with its own Exif).
 *
 * Kept, byte for byte: APP0 (JFIF), APP2 ICC_PROFILE (colours), APP14 (the colour-transform flag),
 * any other APPn, the tables and frame headers (DQT, DHT, SOF, DRI, …) and every scan — the SOS
 * header and its entropy-coded data, stuffed 0xFF00 bytes and RSTn markers included; a
 * progressive image has several scans with tables between them.
 *
 * The Exif Orientation tag says how the stored pixels must be turned to stand upright; without
 * it a portrait phone photo shows on its side. When it is not the default (2..8), a new APP1 Exif
 * segment holding only that tag goes after SOI (after APP0 when there is one).
 */
function stripJpeg(bytes: Buffer): Buffer {
  if (bytes.length < 4 || bytes[0] !== 0xff || bytes[1] !== SOI) throw new MalformedImageError('the JPEG does not start with its start marker');
  const kept: Buffer[] = [];
  let orientation: number | null = null;
  let sawScan = false;
  let sawEnd = false;
  let pos = 2;

  while (pos < bytes.length) {
    const start = pos;
    if (bytes[pos] !== 0xff) throw new MalformedImageError('the JPEG has stray bytes where a marker should be');
    while (bytes[pos + 1] === 0xff) pos++; // fill bytes before a marker
    if (pos + 1 >= bytes.length) break;
    const marker = bytes[pos + 1]!;

    if (marker === EOI) {
      kept.push(bytes.subarray(start, pos + 2));
      sawEnd = true;
      break; // anything after the primary image's end is dropped
    }
    if (marker === TEM || isRst(marker)) {
      kept.push(bytes.subarray(start, pos + 2));
      pos += 2;
      continue;
    }
    if (marker === 0x00 || marker === SOI) throw new MalformedImageError('the JPEG has a marker where none belongs');
    if (pos + 4 > bytes.length) break;
    const length = bytes.readUInt16BE(pos + 2);
    const end = pos + 2 + length;
    if (length < 2 || end > bytes.length) throw new MalformedImageError('a JPEG segment runs past the end of the file');
    const payload = bytes.subarray(pos + 4, end);

    if (marker === SOS) {
      const dataEnd = endOfEntropyData(bytes, end);
      kept.push(bytes.subarray(start, dataEnd));
      sawScan = true;
      pos = dataEnd;
      continue;
    }

    let drop = false;
    if (marker === APP1 && startsWith(payload, EXIF_ID)) {
      orientation ??= readOrientation(payload.subarray(EXIF_ID.length));
      drop = true;
    } else if (marker === APP1 && (startsWith(payload, XMP_ID) || startsWith(payload, XMP_EXTENSION_ID))) {
      drop = true;
    } else if (marker === APP2 && startsWith(payload, MPF_ID)) {
      drop = true;
    } else if (marker === APP13 || marker === COM) {
      drop = true;
    }
    if (!drop) kept.push(bytes.subarray(start, end));
    pos = end;
  }

  if (!sawScan) throw new MalformedImageError('the JPEG holds no image data');
  if (!sawEnd) throw new MalformedImageError('the JPEG stops before its end marker');

  const head: Buffer[] = [bytes.subarray(0, 2)];
  const first = kept[0];
  if (first && jpegMarkerOf(first) === APP0) head.push(kept.shift()!);
  if (orientation !== null && orientation >= 2 && orientation <= 8) head.push(orientationSegment(orientation));
  return Buffer.concat([...head, ...kept]);
}

/** The marker byte of a kept segment (which may start with fill bytes). */
function jpegMarkerOf(segment: Buffer): number | undefined {
  let i = 0;
  while (segment[i] === 0xff) i++;
  return segment[i];
}

/**
 * Where a scan's entropy-coded data ends: at the first 0xFF that starts a real marker. 0xFF00 is
 * a stuffed data byte and RST0–7 sit inside the data.
 */
function endOfEntropyData(bytes: Buffer, from: number): number {
  let p = from;
  for (;;) {
    p = bytes.indexOf(0xff, p);
    if (p < 0 || p + 1 >= bytes.length) throw new MalformedImageError('the JPEG stops in the middle of its image data');
    const next = bytes[p + 1]!;
    if (next === 0x00 || isRst(next)) {
      p += 2;
      continue;
    }
    return p;
  }
}

/** Orientation (tag 0x0112, SHORT) from IFD0 of an Exif TIFF block, or null. */
function readOrientation(tiff: Buffer): number | null {
  if (tiff.length < 8) return null;
  const order = tiff.toString('latin1', 0, 2);
  if (order !== 'II' && order !== 'MM') return null;
  const le = order === 'II';
  const u16 = (at: number) => (le ? tiff.readUInt16LE(at) : tiff.readUInt16BE(at));
  const u32 = (at: number) => (le ? tiff.readUInt32LE(at) : tiff.readUInt32BE(at));
  if (u16(2) !== 42) return null;
  const ifd = u32(4);
  if (ifd + 2 > tiff.length) return null;
  const count = u16(ifd);
  for (let i = 0; i < count; i++) {
    const entry = ifd + 2 + i * 12;
    if (entry + 12 > tiff.length) return null;
    if (u16(entry) === ORIENTATION_TAG) {
      return u16(entry + 2) === TIFF_SHORT && u32(entry + 4) === 1 ? u16(entry + 8) : null;
    }
  }
  return null;
}

/** APP1 "Exif\0\0" + a big-endian TIFF block whose IFD0 holds only Orientation. */
function orientationSegment(orientation: number): Buffer {
  const tiff = Buffer.alloc(8 + 2 + 12 + 4);
  tiff.write('MM', 0, 'latin1');
  tiff.writeUInt16BE(42, 2);
  tiff.writeUInt32BE(8, 4); // IFD0 right after the header
  tiff.writeUInt16BE(1, 8); // one entry
  tiff.writeUInt16BE(ORIENTATION_TAG, 10);
  tiff.writeUInt16BE(TIFF_SHORT, 12);
  tiff.writeUInt32BE(1, 14); // count
  tiff.writeUInt16BE(orientation, 18); // value, left-justified in the 4-byte field
  tiff.writeUInt32BE(0, 22); // no next IFD
  const header = Buffer.from([0xff, APP1, 0, 0]);
  header.writeUInt16BE(2 + EXIF_ID.length + tiff.length, 2);
  return Buffer.concat([header, EXIF_ID, tiff]);
}

function startsWith(data: Buffer, prefix: Buffer): boolean {
  return data.length >= prefix.length && data.subarray(0, prefix.length).equals(prefix);
}

// ---------------------------------------------------------------------------------------------
// PNG

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
const PNG_DROPPED = new Set(['tEXt', 'zTXt', 'iTXt', 'eXIf', 'tIME']);

/**
 * PNG: the signature, then chunks (length, type, data, CRC) up to IEND.
 *
 * Dropped: tEXt, zTXt and iTXt (free text: author, comments, software, XMP lives in iTXt), eXIf
 * (a whole Exif block, GPS included), tIME (when it was last edited), and any bytes after IEND.
 *
 * Kept, each chunk with its CRC as it was: IHDR, PLTE, IDAT, IEND and every other ancillary
 * chunk (colour: iCCP, sRGB, gAMA, cHRM; transparency tRNS; pixel size pHYs; animation …).
 */
function stripPng(bytes: Buffer): Buffer {
  if (bytes.length < PNG_SIGNATURE.length || !bytes.subarray(0, PNG_SIGNATURE.length).equals(PNG_SIGNATURE)) {
    throw new MalformedImageError('the PNG does not start with its signature');
  }
  const kept: Buffer[] = [bytes.subarray(0, PNG_SIGNATURE.length)];
  let pos = PNG_SIGNATURE.length;
  for (;;) {
    if (pos + 12 > bytes.length) throw new MalformedImageError('the PNG stops before its end chunk');
    const length = bytes.readUInt32BE(pos);
    const type = bytes.toString('latin1', pos + 4, pos + 8);
    const end = pos + 12 + length;
    if (!/^[A-Za-z]{4}$/.test(type)) throw new MalformedImageError('the PNG has a chunk with an invalid type');
    if (pos === PNG_SIGNATURE.length && type !== 'IHDR') throw new MalformedImageError('the PNG does not begin with its header chunk');
    if (end > bytes.length) throw new MalformedImageError('a PNG chunk runs past the end of the file');
    if (!PNG_DROPPED.has(type)) kept.push(bytes.subarray(pos, end));
    pos = end;
    if (type === 'IEND') return Buffer.concat(kept);
  }
}

// ---------------------------------------------------------------------------------------------
// WebP

const VP8X_EXIF = 0x08;
const VP8X_XMP = 0x04;

/**
 * WebP: a RIFF container ("RIFF", size, "WEBP") of chunks (FourCC, size, data, a pad byte when
 * the size is odd).
 *
 * Dropped: the EXIF and "XMP " chunks, their two flags in the VP8X header (so the file does not
 * announce what it no longer has), and any bytes past the size RIFF states.
 *
 * Kept, byte for byte: VP8 / VP8L / ALPH image data, ICCP, ANIM / ANMF animation, unknown chunks;
 * the RIFF size is recomputed.
 */
function stripWebp(bytes: Buffer): Buffer {
  if (bytes.length < 12 || bytes.toString('latin1', 0, 4) !== 'RIFF' || bytes.toString('latin1', 8, 12) !== 'WEBP') {
    throw new MalformedImageError('the WebP does not start with its RIFF header');
  }
  const riffEnd = 8 + bytes.readUInt32LE(4);
  if (riffEnd > bytes.length) throw new MalformedImageError('the WebP is shorter than its RIFF header says');
  const kept: Buffer[] = [];
  let pos = 12;
  while (pos < riffEnd) {
    if (pos + 8 > riffEnd) throw new MalformedImageError('the WebP has a chunk header cut short');
    const fourcc = bytes.toString('latin1', pos, pos + 4);
    const size = bytes.readUInt32LE(pos + 4);
    const end = pos + 8 + size + (size & 1);
    if (end > riffEnd) throw new MalformedImageError('a WebP chunk runs past the end of the file');
    if (fourcc === 'EXIF' || fourcc === 'XMP ') {
      // dropped
    } else if (fourcc === 'VP8X') {
      if (size < 10) throw new MalformedImageError('the WebP extended header is too short');
      const chunk = Buffer.from(bytes.subarray(pos, end)); // a copy: the input stays as it was
      chunk[8] = chunk[8]! & ~(VP8X_EXIF | VP8X_XMP);
      kept.push(chunk);
    } else {
      kept.push(bytes.subarray(pos, end));
    }
    pos = end;
  }
  if (kept.length === 0) throw new MalformedImageError('the WebP holds no image data');
  const body = Buffer.concat(kept);
  const header = Buffer.from('RIFF\0\0\0\0WEBP', 'latin1');
  header.writeUInt32LE(4 + body.length, 4);
  return Buffer.concat([header, body]);
}
