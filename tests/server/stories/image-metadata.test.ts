/**
 * Metadata removal from story images. Every fixture is invented for these tests: the camera make,
 * the editor, the captions and the GPS point (open sea, nobody's address) are made up and say so.
 *
 * Sources for the numbers below:
 * - Exif tags: CIPA DC-008 (Exif 2.3) on top of TIFF 6.0 — Make 0x010F, Orientation 0x0112, the
 *   GPS IFD pointer 0x8825, GPSLatitudeRef 0x0001, GPSLatitude 0x0002, GPSLongitudeRef 0x0003,
 *   GPSLongitude 0x0004; field types ASCII 2, SHORT 3, LONG 4, RATIONAL 5; the TIFF header
 *   ("II"/"MM", 42, offset of IFD0) and the 12-byte IFD entry. From memory, not looked up in the
 *   CIPA text; the tag numbers agree with the tag dictionary exifr ships.
 * - JPEG markers (SOI FFD8, EOI FFD9, SOS FFDA, APPn FFE0–FFEF, COM FFFE, RSTn FFD0–FFD7,
 *   0xFF00 stuffing): ITU-T T.81, from memory. The APP1 identifiers "Exif\0\0" (CIPA DC-008),
 *   "http://ns.adobe.com/xap/1.0/\0" and "http://ns.adobe.com/xmp/extension/\0" (XMP
 *   specification part 3), APP2 "MPF\0" (CIPA DC-007) and APP13 "Photoshop 3.0\0" with the IPTC
 *   resource 8BIM 0x0404: from memory.
 * - PNG: the PNG specification (W3C, 3rd ed.) — signature, chunks of length / type / data / CRC-32
 *   over type and data, tEXt / zTXt / iTXt / eXIf / tIME; from memory.
 * - WebP: RFC 9649 — RIFF header, chunks padded to an even size, the VP8X payload (flags byte,
 *   3 reserved bytes, canvas width − 1 and height − 1 as 24-bit little-endian) with EXIF = 0x08
 *   and XMP = 0x04 (checked against the flag diagram in libwebp's container specification text).
 */
import { execFile } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import zlib from 'node:zlib';
import exifr from 'exifr';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { storyImageResponseSchema, storyResponseSchema } from '@shared/stories/story.schema';
import { mediaBinaries } from '../../../server/features/clips/media/binaries';
import { MalformedImageError, stripImageMetadata } from '../../../server/features/stories/image-metadata';
import { StoryImage as StoryImageRow } from '../../../server/features/stories/story.model';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

const run = promisify(execFile);

const MAKE = 'Invented Camera Co (test)';
const EDITOR = 'Invented Editor (test)';
const CAPTION = 'Invented caption with the shop address (test)';
const COMMENT = 'Invented comment: home workshop (test)';
// An invented point in open sea: 10°20'30" S, 25°15'45" W.
const LATITUDE = -(10 + 20 / 60 + 30 / 3600);
const LONGITUDE = -(25 + 15 / 60 + 45 / 3600);
const EXIFR_ALL = { gps: true, xmp: true, iptc: true, tiff: true } as const;

let dir: string;

// ---------------------------------------------------------------------------------------------
// Fixture builders

async function ffmpeg(args: string[]): Promise<{ stdout: Buffer; stderr: string }> {
  const { stdout, stderr } = await run(mediaBinaries().ffmpeg, ['-hide_banner', '-nostdin', ...args], { encoding: 'buffer', maxBuffer: 64 * 1024 ** 2 });
  return { stdout, stderr: stderr.toString('utf8') };
}

/** A still of ffmpeg's test pattern, encoded by the bundled ffmpeg. */
async function makeImage(name: string, size: string, codec: string[] = []): Promise<Buffer> {
  const file = path.join(dir, name);
  await ffmpeg(['-v', 'error', '-y', '-f', 'lavfi', '-i', `testsrc2=size=${size}`, '-frames:v', '1', ...codec, file]);
  return fsp.readFile(file);
}

async function write(name: string, bytes: Buffer): Promise<string> {
  const file = path.join(dir, name);
  await fsp.writeFile(file, bytes);
  return file;
}

/** sha256 of the first picture decoded by the bundled ffmpeg to raw RGB, and what ffmpeg complained of. */
async function pixelHash(bytes: Buffer, name: string): Promise<{ sha: string; stderr: string }> {
  const file = await write(name, bytes);
  const { stdout, stderr } = await ffmpeg(['-v', 'error', '-i', file, '-frames:v', '1', '-f', 'rawvideo', '-pix_fmt', 'rgb24', '-']);
  expect(stdout.length).toBeGreaterThan(0);
  return { sha: crypto.createHash('sha256').update(stdout).digest('hex'), stderr };
}

type ByteOrder = 'II' | 'MM';

/**
 * A TIFF block as an Exif APP1 / eXIf / EXIF chunk holds it: IFD0 with Make, Orientation and the
 * GPS IFD pointer; a GPS IFD with the invented point. 178 bytes.
 */
function exifTiff(order: ByteOrder, orientation = 6): Buffer {
  const le = order === 'II';
  const b = Buffer.alloc(178);
  const u16 = (v: number, at: number) => (le ? b.writeUInt16LE(v, at) : b.writeUInt16BE(v, at));
  const u32 = (v: number, at: number) => (le ? b.writeUInt32LE(v, at) : b.writeUInt32BE(v, at));
  const [ASCII, SHORT, LONG, RATIONAL] = [2, 3, 4, 5];
  const make = `${MAKE}\0`;
  const MAKE_AT = 50;
  const GPS_AT = MAKE_AT + make.length; // 76
  const LAT_AT = GPS_AT + 2 + 4 * 12 + 4; // 130
  const LON_AT = LAT_AT + 24; // 154
  let p = 0;
  const entry = (tag: number, type: number, count: number, value: (at: number) => void) => {
    u16(tag, p);
    u16(type, p + 2);
    u32(count, p + 4);
    value(p + 8);
    p += 12;
  };
  const rationals = (at: number, values: number[]) => values.forEach((v, i) => (u32(v, at + 8 * i), u32(1, at + 8 * i + 4)));

  b.write(order, 0, 'latin1');
  u16(42, 2);
  u32(8, 4);
  u16(3, 8);
  p = 10;
  entry(0x010f, ASCII, make.length, (at) => u32(MAKE_AT, at)); // Make
  entry(0x0112, SHORT, 1, (at) => u16(orientation, at)); // Orientation
  entry(0x8825, LONG, 1, (at) => u32(GPS_AT, at)); // GPS IFD pointer
  u32(0, p); // no IFD1
  b.write(make, MAKE_AT, 'latin1');
  u16(4, GPS_AT);
  p = GPS_AT + 2;
  entry(0x0001, ASCII, 2, (at) => b.write('S\0', at, 'latin1')); // GPSLatitudeRef
  entry(0x0002, RATIONAL, 3, (at) => u32(LAT_AT, at)); // GPSLatitude
  entry(0x0003, ASCII, 2, (at) => b.write('W\0', at, 'latin1')); // GPSLongitudeRef
  entry(0x0004, RATIONAL, 3, (at) => u32(LON_AT, at)); // GPSLongitude
  u32(0, p);
  rationals(LAT_AT, [10, 20, 30]);
  rationals(LON_AT, [25, 15, 45]);
  return b;
}

const XMP_PACKET =
  '<x:xmpmeta xmlns:x="adobe:ns:meta/"><rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/22-rdf-syntax-ns#">' +
  `<rdf:Description rdf:about="" xmlns:xmp="http://ns.adobe.com/xap/1.0/" xmlns:exif="http://ns.adobe.com/exif/1.0/" xmp:CreatorTool="${EDITOR}" exif:GPSLatitude="10,20.5S" exif:GPSLongitude="25,15.75W"/>` +
  '</rdf:RDF></x:xmpmeta>';

function jpegSegment(marker: number, payload: Buffer): Buffer {
  const head = Buffer.from([0xff, marker, 0, 0]);
  head.writeUInt16BE(payload.length + 2, 2);
  return Buffer.concat([head, payload]);
}

const exifSegment = (order: ByteOrder) => jpegSegment(0xe1, Buffer.concat([Buffer.from('Exif\0\0', 'latin1'), exifTiff(order)]));
const xmpSegment = () => jpegSegment(0xe1, Buffer.from(`http://ns.adobe.com/xap/1.0/\0${XMP_PACKET}`, 'latin1'));
function extendedXmpSegment(): Buffer {
  const rest = Buffer.from(`<x:xmpmeta xmlns:x="adobe:ns:meta/"><!-- ${EDITOR} extended part --></x:xmpmeta>`, 'latin1');
  const lengths = Buffer.alloc(8);
  lengths.writeUInt32BE(rest.length, 0); // full length of the extended packet
  lengths.writeUInt32BE(0, 4); // offset of this part
  return jpegSegment(0xe1, Buffer.concat([Buffer.from('http://ns.adobe.com/xmp/extension/\0', 'latin1'), Buffer.from('0123456789ABCDEF0123456789ABCDEF', 'latin1'), lengths, rest]));
}
// An MP index as a minimal TIFF with an empty IFD (the content does not matter here).
const mpfSegment = () => jpegSegment(0xe2, Buffer.from('MPF\0MM\0\x2a\0\0\0\x08\0\0\0\0\0\0', 'latin1'));
function iptcSegment(): Buffer {
  const caption = Buffer.from(CAPTION, 'latin1');
  const dataset = Buffer.concat([Buffer.from([0x1c, 0x02, 0x78, caption.length >> 8, caption.length & 0xff]), caption]); // 2:120 caption
  const resource = Buffer.alloc(12);
  resource.write('8BIM', 0, 'latin1');
  resource.writeUInt16BE(0x0404, 4); // IPTC-NAA record
  resource.writeUInt16BE(0, 6); // empty name, padded to even
  resource.writeUInt32BE(dataset.length, 8);
  const pad = dataset.length % 2 ? Buffer.alloc(1) : Buffer.alloc(0);
  return jpegSegment(0xed, Buffer.concat([Buffer.from('Photoshop 3.0\0', 'latin1'), resource, dataset, pad]));
}
const comSegment = () => jpegSegment(0xfe, Buffer.from(COMMENT, 'latin1'));

/** Segments of a JPEG from SOI up to its first SOS (marker and whole segment bytes). */
function headerSegments(jpeg: Buffer): { marker: number; bytes: Buffer }[] {
  const out: { marker: number; bytes: Buffer }[] = [];
  let p = 2;
  while (jpeg[p + 1] !== 0xda) {
    const end = p + 2 + jpeg.readUInt16BE(p + 2);
    out.push({ marker: jpeg[p + 1]!, bytes: jpeg.subarray(p, end) });
    p = end;
  }
  return out;
}

/** Offset of the first SOS marker. */
function firstSos(jpeg: Buffer): number {
  let p = 2;
  while (jpeg[p + 1] !== 0xda) p += 2 + jpeg.readUInt16BE(p + 2);
  return p;
}

/** The ffmpeg JPEG with metadata spliced in after APP0, and a second small JPEG with its own Exif after EOI. */
function phoneJpeg(base: Buffer, second: Buffer, order: ByteOrder): { bytes: Buffer; primaryEnd: number } {
  const app0End = 2 + 2 + base.readUInt16BE(4);
  const primary = Buffer.concat([
    base.subarray(0, app0End),
    exifSegment(order),
    xmpSegment(),
    extendedXmpSegment(),
    mpfSegment(),
    iptcSegment(),
    comSegment(),
    base.subarray(app0End),
  ]);
  const secondApp0End = 2 + 2 + second.readUInt16BE(4);
  const appended = Buffer.concat([second.subarray(0, secondApp0End), exifSegment(order), second.subarray(secondApp0End)]);
  return { bytes: Buffer.concat([primary, appended]), primaryEnd: primary.length };
}

function pngChunk(type: string, data: Buffer): Buffer {
  const head = Buffer.alloc(8);
  head.writeUInt32BE(data.length, 0);
  head.write(type, 4, 'latin1');
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(zlib.crc32(Buffer.concat([head.subarray(4), data])), 0);
  return Buffer.concat([head, data, crc]);
}

/** The ffmpeg PNG with text, XMP, Exif and a timestamp after IHDR, and (unless told) bytes after IEND. */
function phonePng(base: Buffer, trailing = true): Buffer {
  const ihdrEnd = 8 + 12 + base.readUInt32BE(8);
  const time = Buffer.from([0x07, 0xe8, 1, 2, 3, 4, 5]); // an invented moment
  return Buffer.concat([
    base.subarray(0, ihdrEnd),
    pngChunk('tEXt', Buffer.from(`Comment\0${COMMENT}`, 'latin1')),
    pngChunk('zTXt', Buffer.concat([Buffer.from('Author\0\0', 'latin1'), zlib.deflateSync(Buffer.from(MAKE, 'latin1'))])),
    pngChunk('iTXt', Buffer.from(`XML:com.adobe.xmp\0\0\0\0\0${XMP_PACKET}`, 'utf8')),
    pngChunk('eXIf', exifTiff('MM')),
    pngChunk('tIME', time),
    base.subarray(ihdrEnd),
    trailing ? Buffer.from('Invented trailing bytes after IEND (test)', 'latin1') : Buffer.alloc(0),
  ]);
}

function riffChunk(fourcc: string, data: Buffer): Buffer {
  const head = Buffer.alloc(8);
  head.write(fourcc, 0, 'latin1');
  head.writeUInt32LE(data.length, 4);
  return Buffer.concat([head, data, data.length % 2 ? Buffer.alloc(1) : Buffer.alloc(0)]);
}

function riff(chunks: Buffer[], trailing = Buffer.alloc(0)): Buffer {
  const body = Buffer.concat(chunks);
  const head = Buffer.from('RIFF\0\0\0\0WEBP', 'latin1');
  head.writeUInt32LE(4 + body.length, 4);
  return Buffer.concat([head, body, trailing]);
}

function vp8x(flags: number, width: number, height: number): Buffer {
  const payload = Buffer.alloc(10);
  payload[0] = flags;
  payload.writeUIntLE(width - 1, 4, 3);
  payload.writeUIntLE(height - 1, 7, 3);
  return riffChunk('VP8X', payload);
}

/** The simple ffmpeg WebP made extended: VP8X (EXIF | XMP), its VP8 chunk, EXIF, XMP and (unless told) bytes past the RIFF size. */
function phoneWebp(base: Buffer, width: number, height: number, trailing = true): Buffer {
  const xmp = Buffer.from(XMP_PACKET.length % 2 ? XMP_PACKET : `${XMP_PACKET} `, 'latin1');
  expect(xmp.length % 2).toBe(1); // odd, so the XMP chunk carries a pad byte
  return riff([vp8x(0x08 | 0x04, width, height), base.subarray(12), riffChunk('EXIF', exifTiff('II')), riffChunk('XMP ', xmp)], trailing ? Buffer.from('Invented trailing bytes (test)', 'latin1') : Buffer.alloc(0));
}

/** The chunks of a WebP: FourCC and payload. */
function webpChunks(webp: Buffer): { fourcc: string; data: Buffer }[] {
  const out: { fourcc: string; data: Buffer }[] = [];
  const end = 8 + webp.readUInt32LE(4);
  for (let p = 12; p < end; ) {
    const size = webp.readUInt32LE(p + 4);
    out.push({ fourcc: webp.toString('latin1', p, p + 4), data: webp.subarray(p + 8, p + 8 + size) });
    p += 8 + size + (size % 2);
  }
  return out;
}

function pngChunkTypes(png: Buffer): string[] {
  const out: string[] = [];
  for (let p = 8; p < png.length; p += 12 + png.readUInt32BE(p)) out.push(png.toString('latin1', p + 4, p + 8));
  return out;
}

/** No trace of the invented metadata anywhere in the bytes. */
function expectNoTrace(bytes: Buffer) {
  for (const text of ['Invented', 'ns.adobe.com', 'Photoshop 3.0', 'MPF\0', 'XML:com.adobe.xmp']) {
    expect(bytes.includes(Buffer.from(text, 'latin1')), text).toBe(false);
  }
}

// ---------------------------------------------------------------------------------------------

let jpegBase: Buffer; // ffmpeg's JPEG: APP0 JFIF, COM "Lavc…", tables, one baseline scan
let jpegPlain: Buffer; // the same with -flags +bitexact: APP0 JFIF and no COM
let jpegSecond: Buffer;
let pngBase: Buffer;
let webpBase: Buffer;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-image-metadata-'));
  [jpegBase, jpegPlain, jpegSecond, pngBase, webpBase] = await Promise.all([
    makeImage('base.jpg', '640x480'),
    makeImage('plain.jpg', '64x48', ['-flags', '+bitexact']),
    makeImage('second.jpg', '32x24'),
    makeImage('base.png', '64x48'),
    makeImage('base.webp', '80x60', ['-c:v', 'libwebp']),
  ]);
});
afterAll(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('JPEG', () => {
  for (const order of ['II', 'MM'] as const) {
    it(`drops Exif (${order === 'II' ? 'little' : 'big'}-endian TIFF), XMP, IPTC, COM, MPF and the appended picture, and keeps orientation 6`, async () => {
      const { bytes: phone, primaryEnd } = phoneJpeg(jpegBase, jpegSecond, order);

      // Before: the reference reader finds what a phone would publish (so the fixture is real).
      const before = await exifr.parse(phone, EXIFR_ALL);
      expect(before.Make).toBe(MAKE); // IFD0 0x010F
      expect(before.latitude).toBeCloseTo(LATITUDE, 6); // GPS 0x0001/0x0002
      expect(before.longitude).toBeCloseTo(LONGITUDE, 6); // GPS 0x0003/0x0004
      expect(before.CreatorTool).toBe(EDITOR); // XMP
      expect(before.Caption).toBe(CAPTION); // IPTC 2:120
      expect(await exifr.orientation(phone)).toBe(6); // IFD0 0x0112
      expect((await exifr.gps(phone.subarray(primaryEnd))).latitude).toBeCloseTo(LATITUDE, 6); // the appended picture has its own

      const stripped = stripImageMetadata(phone, 'image/jpeg');

      // After: nothing but the orientation.
      const after = (await exifr.parse(stripped, EXIFR_ALL)) ?? {};
      for (const key of ['Make', 'latitude', 'longitude', 'GPSLatitude', 'GPSLongitude', 'CreatorTool', 'Caption']) expect(after, key).not.toHaveProperty(key);
      expect(await exifr.gps(stripped)).toBeUndefined();
      expect(await exifr.orientation(stripped)).toBe(6); // Orientation 6: turn 90° clockwise to display (from memory)
      expectNoTrace(stripped);

      // The header is JFIF, the one-tag Exif, then ffmpeg's tables and frame header (its COM goes too).
      const markers = headerSegments(stripped).map((s) => s.marker);
      expect(markers[0]).toBe(0xe0);
      expect(markers[1]).toBe(0xe1);
      expect(markers.slice(2)).toEqual(headerSegments(jpegBase).map((s) => s.marker).filter((m) => m !== 0xe0 && m !== 0xfe));
      expect(headerSegments(stripped)[1]!.bytes.length).toBe(2 + 2 + 6 + 8 + 2 + 12 + 4); // marker, length, Exif\0\0, TIFF header, one entry

      // The compressed data from the first SOS to EOI is the same bytes, and nothing follows it.
      expect(stripped.subarray(firstSos(stripped)).equals(jpegBase.subarray(firstSos(jpegBase)))).toBe(true);
      expect(phone.subarray(firstSos(phone), primaryEnd).equals(jpegBase.subarray(firstSos(jpegBase)))).toBe(true);

      // Same pixels, decoded by the bundled ffmpeg.
      const [a, b] = await Promise.all([pixelHash(phone, `phone-${order}.jpg`), pixelHash(stripped, `stripped-${order}.jpg`)]);
      expect(a.stderr).toBe('');
      expect(b.stderr).toBe('');
      expect(b.sha).toBe(a.sha);
    });
  }

  it('writes no Exif segment for orientation 1 (the default) and keeps an APP2 ICC profile and APP14', async () => {
    const app0End = 2 + 2 + jpegPlain.readUInt16BE(4);
    const icc = jpegSegment(0xe2, Buffer.from('ICC_PROFILE\0\x01\x01invented profile bytes (test)', 'latin1'));
    const app14 = jpegSegment(0xee, Buffer.from('Adobe\0\x64\0\0\0\0\x01', 'latin1'));
    const upright = jpegSegment(0xe1, Buffer.concat([Buffer.from('Exif\0\0', 'latin1'), exifTiff('II', 1)]));
    const input = Buffer.concat([jpegPlain.subarray(0, app0End), upright, icc, app14, jpegPlain.subarray(app0End)]);
    const expected = Buffer.concat([jpegPlain.subarray(0, app0End), icc, app14, jpegPlain.subarray(app0End)]);
    expect(stripImageMetadata(input, 'image/jpeg').equals(expected)).toBe(true);
  });

  it('puts the orientation right after SOI when there is no APP0', () => {
    const app0End = 2 + 2 + jpegPlain.readUInt16BE(4);
    const input = Buffer.concat([jpegPlain.subarray(0, 2), exifSegment('MM'), jpegPlain.subarray(app0End)]);
    const out = stripImageMetadata(input, 'image/jpeg');
    expect(headerSegments(out)[0]!.marker).toBe(0xe1);
    expect(out.subarray(2 + headerSegments(out)[0]!.bytes.length).equals(jpegPlain.subarray(app0End))).toBe(true);
  });

  it('walks scans: stuffed bytes and RSTn stay in the data, tables between progressive scans stay, fill bytes and TEM are kept (a container, not a decodable picture)', () => {
    const seg = (marker: number, payload: number[]) => jpegSegment(marker, Buffer.from(payload));
    const sos = seg(0xda, [1, 1, 0x00, 0, 0x3f, 0]);
    const scan1 = Buffer.from([0x12, 0xff, 0x00, 0x34, 0xff, 0xd0, 0x56, 0xff, 0xd7, 0x78]);
    const scan2 = Buffer.from([0x9a, 0xff, 0x00, 0xbc]);
    const keep = [
      Buffer.from([0xff, 0xd8]),
      seg(0xe0, [...Buffer.from('JFIF\0', 'latin1'), 1, 2, 0, 0, 1, 0, 1, 0, 0]),
      Buffer.from([0xff, 0x01]), // TEM
      Buffer.from([0xff, 0xff]), // fill byte before the next marker
      seg(0xdb, [0, ...Array<number>(64).fill(1)]),
      seg(0xc2, [8, 0, 16, 0, 16, 1, 1, 0x11, 0]),
      sos,
      scan1,
      seg(0xc4, [0x10, ...Array<number>(16).fill(0)]),
    ];
    const input = Buffer.concat([...keep, comSegment(), sos, scan2, Buffer.from([0xff, 0xd9]), Buffer.from('after EOI')]);
    const expected = Buffer.concat([...keep, sos, scan2, Buffer.from([0xff, 0xd9])]);
    expect(stripImageMetadata(input, 'image/jpeg').equals(expected)).toBe(true);
  });

  it('a JPEG without metadata comes out byte-identical; ffmpeg\'s default JPEG loses only its COM', () => {
    expect(headerSegments(jpegPlain).map((s) => s.marker)).not.toContain(0xfe);
    expect(stripImageMetadata(jpegPlain, 'image/jpeg').equals(jpegPlain)).toBe(true);
    const com = headerSegments(jpegBase).find((s) => s.marker === 0xfe)!;
    expect(com.bytes.toString('latin1')).toMatch(/Lavc/);
    const withoutCom = Buffer.concat([jpegBase.subarray(0, com.bytes.byteOffset - jpegBase.byteOffset), jpegBase.subarray(com.bytes.byteOffset - jpegBase.byteOffset + com.bytes.length)]);
    expect(stripImageMetadata(jpegBase, 'image/jpeg').equals(withoutCom)).toBe(true);
  });

  it('a malformed JPEG throws', () => {
    const lying = Buffer.from(jpegPlain);
    lying.writeUInt16BE(0xfff0, 4); // APP0 length runs past the end
    expect(() => stripImageMetadata(lying, 'image/jpeg')).toThrow(MalformedImageError);
    expect(() => stripImageMetadata(lying, 'image/jpeg')).toThrow(/runs past the end/);
    expect(() => stripImageMetadata(jpegPlain.subarray(0, firstSos(jpegPlain) + 20), 'image/jpeg')).toThrow(MalformedImageError); // no EOI
    expect(() => stripImageMetadata(jpegPlain.subarray(0, firstSos(jpegPlain)), 'image/jpeg')).toThrow(MalformedImageError); // no SOS
    expect(() => stripImageMetadata(Buffer.from([0xff, 0xd8, 0xff, 0xd9]), 'image/jpeg')).toThrow(/no image data/);
    expect(() => stripImageMetadata(Buffer.from([0xff, 0xd8, 0x00, 0x00]), 'image/jpeg')).toThrow(MalformedImageError);
  });
});

describe('PNG', () => {
  it('drops tEXt, zTXt, iTXt, eXIf, tIME and what follows IEND; what is left is ffmpeg\'s file, byte for byte', async () => {
    const phone = phonePng(pngBase);
    const before = await exifr.parse(phone, EXIFR_ALL);
    expect(before.Make).toBe(MAKE); // eXIf
    expect(before.latitude).toBeCloseTo(LATITUDE, 6);
    expect(before.CreatorTool).toBe(EDITOR); // iTXt XML:com.adobe.xmp
    expect(before.Comment).toBe(COMMENT); // tEXt

    const stripped = stripImageMetadata(phone, 'image/png');
    const after = (await exifr.parse(stripped, EXIFR_ALL)) ?? {};
    for (const key of ['Make', 'latitude', 'longitude', 'CreatorTool', 'Comment']) expect(after, key).not.toHaveProperty(key);
    expectNoTrace(stripped);
    expect(pngChunkTypes(stripped)).toEqual(pngChunkTypes(pngBase));
    expect(stripped.equals(pngBase)).toBe(true);

    const [a, b] = await Promise.all([pixelHash(phone, 'phone.png'), pixelHash(stripped, 'stripped.png')]);
    expect(b.stderr).toBe('');
    expect(b.sha).toBe(a.sha);
  });

  it('a PNG without metadata comes out byte-identical', () => {
    expect(stripImageMetadata(pngBase, 'image/png').equals(pngBase)).toBe(true);
  });

  it('a malformed PNG throws', () => {
    const lying = Buffer.from(pngBase);
    lying.writeUInt32BE(pngBase.length, 8 + 12 + 13); // the chunk after IHDR claims more bytes than the file has
    expect(() => stripImageMetadata(lying, 'image/png')).toThrow(/runs past the end/);
    expect(() => stripImageMetadata(pngBase.subarray(0, pngBase.length - 12), 'image/png')).toThrow(MalformedImageError); // no IEND
    expect(() => stripImageMetadata(pngBase.subarray(0, 8), 'image/png')).toThrow(MalformedImageError);
  });
});

describe('WebP', () => {
  it('drops EXIF and XMP chunks and their VP8X flags, keeps the image chunk, fixes the RIFF size', async () => {
    const phone = phoneWebp(webpBase, 80, 60);
    // exifr reads no WebP, so the fixture's EXIF payload is checked on its own as a TIFF.
    const exifChunk = webpChunks(phone).find((c) => c.fourcc === 'EXIF')!;
    const before = await exifr.parse(exifChunk.data, EXIFR_ALL);
    expect(before.Make).toBe(MAKE);
    expect(before.latitude).toBeCloseTo(LATITUDE, 6);

    const stripped = stripImageMetadata(phone, 'image/webp');
    expectNoTrace(stripped);
    const chunks = webpChunks(stripped);
    expect(chunks.map((c) => c.fourcc)).toEqual(['VP8X', 'VP8 ']);
    expect(chunks[0]!.data[0]).toBe(0); // EXIF (0x08) and XMP (0x04) cleared
    expect(chunks[0]!.data.subarray(1).equals(webpChunks(phone)[0]!.data.subarray(1))).toBe(true); // reserved bytes and canvas size as they were
    expect(chunks[1]!.data.equals(webpChunks(webpBase)[0]!.data)).toBe(true);
    expect(stripped.readUInt32LE(4)).toBe(stripped.length - 8);
    expect(stripped.equals(riff([vp8x(0, 80, 60), webpBase.subarray(12)]))).toBe(true);

    // Decoded without the bytes past the RIFF size: the bundled ffmpeg reads those as a second
    // picture and aborts (the upload check refuses such files as damaged before they get here).
    const [a, b] = await Promise.all([pixelHash(phoneWebp(webpBase, 80, 60, false), 'phone.webp'), pixelHash(stripped, 'stripped.webp')]);
    expect(a.stderr).toBe('');
    expect(b.stderr).toBe('');
    expect(b.sha).toBe(a.sha);
  });

  it('a WebP without metadata comes out byte-identical', () => {
    expect(stripImageMetadata(webpBase, 'image/webp').equals(webpBase)).toBe(true);
  });

  it('a malformed WebP throws', () => {
    const lying = Buffer.from(webpBase);
    lying.writeUInt32LE(webpBase.length + 100, 4); // RIFF size larger than the file
    expect(() => stripImageMetadata(lying, 'image/webp')).toThrow(/shorter than its RIFF header says/);
    const chunkLies = Buffer.from(webpBase);
    chunkLies.writeUInt32LE(webpBase.length, 16); // VP8 chunk larger than the RIFF
    expect(() => stripImageMetadata(chunkLies, 'image/webp')).toThrow(/runs past the end/);
    expect(() => stripImageMetadata(riff([riffChunk('VP8X', Buffer.alloc(4))]), 'image/webp')).toThrow(MalformedImageError);
  });
});

describe('through the upload route', () => {
  let t: TestApp;
  let agent: Awaited<ReturnType<typeof signIn>>;
  let token: string;
  let storyId: number;

  const upload = (file: string, name: string) => agent.post(`/api/stories/${storyId}/images`).set('x-csrf-token', token).attach('file', file, name);
  const filesUnder = (root: string) =>
    fs
      .readdirSync(root, { recursive: true, withFileTypes: true })
      .filter((e) => e.isFile())
      .map((e) => path.relative(root, path.join(e.parentPath, e.name)))
      .sort();

  beforeAll(async () => {
    t = await startTestApp();
    agent = await signIn(t, 'demo-builder');
    token = await csrfToken(agent);
    const build = await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Metadata tests' }).expect(201);
    const story = await agent.post(`/api/builds/${build.body.build.id}/stories`).set('x-csrf-token', token).send({ title: 'Photos from a phone' }).expect(201);
    storyId = storyResponseSchema.parse(story.body).story.id;
  });
  afterAll(async () => {
    await t.close();
  });

  it('a phone JPEG is stored without GPS or camera data, upright, and sizeBytes is the stored size', async () => {
    const { bytes } = phoneJpeg(jpegBase, jpegSecond, 'MM');
    const res = await upload(await write('upload-phone.jpg', bytes), 'IMG_0001.JPG').expect(201);
    const image = storyImageResponseSchema.parse(res.body).image;
    expect(image).toMatchObject({ contentType: 'image/jpeg', width: 640, height: 480 });
    const served = (await agent.get(image.url).buffer(true).expect(200)).body as Buffer;
    expect(image.sizeBytes).toBe(served.length);
    expect(served.length).toBeLessThan(bytes.length);
    const row = await StoryImageRow.findByPk(image.id);
    expect((await t.storage.stat(row!.storageKey))!.size).toBe(served.length);
    expect(await exifr.gps(served)).toBeUndefined();
    expect((await exifr.parse(served, EXIFR_ALL)) ?? {}).not.toHaveProperty('Make');
    expect(await exifr.orientation(served)).toBe(6);
    expectNoTrace(served);
    expect(served.equals(stripImageMetadata(bytes, 'image/jpeg'))).toBe(true);
    expect(filesUnder(t.mediaDir).filter((f) => f.startsWith('.scratch'))).toEqual([]);
  });

  it('a PNG and a WebP with metadata are stored as ffmpeg wrote them / with the metadata chunks gone', async () => {
    // Without trailing bytes: the upload check (the bundled ffmpeg) already refuses those as damaged.
    const png = storyImageResponseSchema.parse((await upload(await write('upload-phone.png', phonePng(pngBase, false)), 'p.png').expect(201)).body).image;
    const servedPng = (await agent.get(png.url).buffer(true).expect(200)).body as Buffer;
    expect(servedPng.equals(pngBase)).toBe(true);
    expect(png.sizeBytes).toBe(pngBase.length);
    const webp = storyImageResponseSchema.parse((await upload(await write('upload-phone.webp', phoneWebp(webpBase, 80, 60, false)), 'w.webp').expect(201)).body).image;
    const servedWebp = (await agent.get(webp.url).buffer(true).expect(200)).body as Buffer;
    expectNoTrace(servedWebp);
    expect(webp.sizeBytes).toBe(servedWebp.length);
    expect(webpChunks(servedWebp).map((c) => c.fourcc)).toEqual(['VP8X', 'VP8 ']);
  });

  it('a JPEG whose segment length lies (ffmpeg still decodes it) is refused as damaged and leaves nothing behind', async () => {
    const app0End = 2 + 2 + jpegPlain.readUInt16BE(4);
    const com = jpegSegment(0xfe, Buffer.from('x'));
    com.writeUInt16BE(0xfff0, 2); // runs far past the end of this small file
    const lying = Buffer.concat([jpegPlain.subarray(0, app0End), com, jpegPlain.subarray(app0End)]);
    expect(lying.length).toBeLessThan(0xfff0);
    const file = await write('lying.jpg', lying);
    // The decoder skips the bad comment, so the refusal below comes from the container check.
    expect((await pixelHash(lying, 'lying-decode.jpg')).stderr).toBe('');

    const before = filesUnder(t.mediaDir);
    const rows = await StoryImageRow.count({ where: { storyId } });
    const res = await upload(file, 'lying.jpg').expect(422);
    const error = errorBodySchema.parse(res.body).error;
    expect(error.code).toBe('damaged_image');
    expect(error.message).toMatch(/segment runs past the end/);
    expect(error.details.map((d) => d.path)).toContain('file');
    expect(filesUnder(t.mediaDir)).toEqual(before);
    expect(await StoryImageRow.count({ where: { storyId } })).toBe(rows);
  });
});
