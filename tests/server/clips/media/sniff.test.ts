import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { describeNonVideo, readHead, sniffContainer } from '../../../../server/features/clips/media/sniff';
import { makeDisguisedFile, makeTestClip, makeZeroByteFile } from '../../../support/clips';

let dir: string;
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'benchproof-sniff-'));
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe('sniffContainer', () => {
  it.each([
    ['mp4-h264', 'mp4'],
    ['mov-no-faststart', 'mov'],
    ['mkv-h264', 'matroska'],
    ['webm-vp9', 'webm'],
  ] as const)('recognises a real %s file as %s from its first bytes', async (format, container) => {
    const file = await makeTestClip({ format, dir, seconds: 1, audio: false });
    expect(sniffContainer(await readHead(file))).toBe(container);
  });

  it('recognises AVI, MPEG-TS, M2TS, MPEG-PS, FLV and Ogg by their magic bytes', () => {
    const avi = Buffer.concat([Buffer.from('RIFF'), Buffer.alloc(4), Buffer.from('AVI LIST')]);
    const ts = Buffer.alloc(188 * 5);
    for (let i = 0; i < 5; i++) ts[i * 188] = 0x47;
    const m2ts = Buffer.alloc(192 * 5);
    for (let i = 0; i < 5; i++) m2ts[4 + i * 192] = 0x47;
    const ps = Buffer.concat([Buffer.from([0, 0, 1, 0xba]), Buffer.alloc(12)]);
    const flv = Buffer.concat([Buffer.from('FLV'), Buffer.from([1, 5]), Buffer.alloc(11)]);
    const ogg = Buffer.concat([Buffer.from('OggS'), Buffer.alloc(12)]);
    expect([avi, ts, m2ts, ps, flv, ogg].map(sniffContainer)).toEqual(['avi', 'mpegts', 'mpegts', 'mpeg', 'flv', 'ogg']);
  });

  it('tells MOV, M4V and 3GP apart by the ftyp brand', () => {
    const ftyp = (brand: string) => Buffer.concat([Buffer.from([0, 0, 0, 20]), Buffer.from('ftyp' + brand), Buffer.alloc(8)]);
    expect(['qt  ', 'M4V ', '3gp5', 'isom', 'mp42'].map((b) => sniffContainer(ftyp(b)))).toEqual(['mov', 'm4v', '3gp', 'mp4', 'mp4']);
  });

  it.each(['html', 'zip', 'jpeg'] as const)('refuses %s renamed .mp4', async (kind) => {
    const file = await makeDisguisedFile(kind, dir);
    expect(path.extname(file)).toBe('.mp4');
    expect(sniffContainer(await readHead(file))).toBeNull();
  });

  it('refuses a zero-byte file, HEIC photos and M4A songs (ISO BMFF, but not video)', async () => {
    expect(sniffContainer(await readHead(await makeZeroByteFile(dir)))).toBeNull();
    const ftyp = (brand: string) => Buffer.concat([Buffer.from([0, 0, 0, 20]), Buffer.from('ftyp' + brand), Buffer.alloc(8)]);
    expect(sniffContainer(ftyp('heic'))).toBeNull();
    expect(sniffContainer(ftyp('M4A '))).toBeNull();
  });

  it('refuses plain text and scripts, even one starting with the MPEG-TS sync byte', () => {
    expect(sniffContainer(Buffer.from('#!/bin/sh\nrm -rf /\n'.repeat(100)))).toBeNull();
    expect(sniffContainer(Buffer.from('G'.repeat(100)))).toBeNull();
  });
});

describe('describeNonVideo', () => {
  it('names what a refused file looks like, for the message', async () => {
    expect(describeNonVideo(await readHead(await makeDisguisedFile('html', dir)))).toBe('an HTML page');
    expect(describeNonVideo(await readHead(await makeDisguisedFile('zip', dir)))).toMatch(/^a ZIP archive/);
    expect(describeNonVideo(await readHead(await makeDisguisedFile('jpeg', dir)))).toBe('a JPEG photo');
    expect(describeNonVideo(Buffer.alloc(0))).toBe('an empty file');
    expect(describeNonVideo(Buffer.from('console.log(1)'))).toBe('a text or script file');
  });
});
