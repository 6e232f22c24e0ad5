// Uploaded videos are decoded by ffmpeg, whose demuxers follow references inside a file: an HLS
// playlist or an ffconcat script names other URLs, and `concat:`/`subfile:` read slices of
// other files. Every ffmpeg and ffprobe the server runs may read through the `file` protocol
// only, so an upload cannot make the server fetch a URL (request forgery) or splice another
// file into a clip's pictures.
// OWASP ASVS 5.0, V5.2 (File Upload and Content): uploaded files are validated and handled safely.
import { execFile } from 'node:child_process';
import fs from 'node:fs/promises';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { mediaBinaries } from '../../../server/features/clips/media/binaries';
import { MediaCommandFailed, runFfmpeg, runFfprobe } from '../../../server/features/clips/media/ffmpeg-run';
import { MediaRejected, probeVideo } from '../../../server/features/clips/media/probe';
import { makeTestClip } from '../../support/clips';

const run = promisify(execFile);

let dir: string;
let clip: string;
let server: http.Server;
let base: string;
const requests: string[] = [];

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'benchproof-protocols-'));
  clip = await makeTestClip({ format: 'mp4-h264', dir, seconds: 1, audio: false });
  // Stands for any address the server can reach: it records every request and serves nothing.
  server = http.createServer((req, res) => {
    requests.push(`${req.method} ${req.url}`);
    res.writeHead(404).end();
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(async () => {
  await new Promise((resolve) => server.close(resolve));
  await fs.rm(dir, { recursive: true, force: true });
});
beforeEach(() => {
  requests.length = 0;
});

async function write(name: string, text: string) {
  const file = path.join(dir, name);
  await fs.writeFile(file, text);
  return file;
}

const hlsPlaylist = () => write('playlist.m3u8', `#EXTM3U\n#EXT-X-VERSION:3\n#EXT-X-TARGETDURATION:2\n#EXTINF:1.0,\n${base}/segment.ts\n#EXT-X-ENDLIST\n`);
const ffconcatScript = () => write('list.ffconcat', `ffconcat version 1.0\nfile '${base}/part.mp4'\n`);

async function refusal(promise: Promise<unknown>): Promise<MediaCommandFailed> {
  const err = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(err).toBeInstanceOf(MediaCommandFailed);
  return err as MediaCommandFailed;
}

// ffmpeg's own default for a local file still allows `crypto` and `data` ("file,crypto,data"), and
// none at all for an input that is itself a URL: the messages below name our list, 'file' alone.
const REFUSED_HTTP = "Protocol 'http' not on whitelist 'file'!";

describe('ffmpeg and ffprobe read uploads through the file protocol only', () => {
  it('ffprobe refuses the http segment of an HLS playlist, and no request leaves the server', async () => {
    const err = await refusal(runFfprobe(['-v', 'error', '-show_format', await hlsPlaylist()], { what: 'read the video' }));
    expect(err.stderrTail).toContain(REFUSED_HTTP);
    expect(requests).toEqual([]);
  });

  it('ffmpeg refuses the same playlist when decoding it, and no request leaves the server', async () => {
    const err = await refusal(runFfmpeg(['-v', 'error', '-i', await hlsPlaylist(), '-f', 'null', '-'], { what: 'decode the video' }));
    expect(err.stderrTail).toContain(REFUSED_HTTP);
    expect(requests).toEqual([]);
  });

  it('an ffconcat script naming a URL is refused even with its own safe mode off', async () => {
    const err = await refusal(runFfprobe(['-v', 'error', '-safe', '0', '-show_format', await ffconcatScript()], { what: 'read the video' }));
    expect(err.stderrTail).toContain(REFUSED_HTTP);
    expect(requests).toEqual([]);
  });

  it('refuses concat: and subfile: references, which would read slices of other files', async () => {
    const concat = await refusal(runFfprobe(['-v', 'error', '-show_format', `concat:${clip}|${clip}`], { what: 'read the video' }));
    expect(concat.stderrTail).toContain("Protocol 'concat' not on whitelist 'file'!");
    const subfile = await refusal(
      runFfmpeg(['-v', 'error', '-i', `subfile,,start,0,end,4096,,:${clip}`, '-f', 'null', '-'], { what: 'decode the video' }),
    );
    expect(subfile.stderrTail).toContain("Protocol 'subfile' not on whitelist 'file'!");
  });

  it('refuses a URL given as the input itself, and no request leaves the server', async () => {
    const probe = await refusal(runFfprobe(['-v', 'error', '-show_format', `${base}/clip.mp4`], { what: 'read the video' }));
    expect(probe.stderrTail).toContain(REFUSED_HTTP);
    const decode = await refusal(runFfmpeg(['-v', 'error', '-i', `${base}/clip.mp4`, '-f', 'null', '-'], { what: 'decode the video' }));
    expect(decode.stderrTail).toContain(REFUSED_HTTP);
    expect(requests).toEqual([]);
  });

  // The empty request lists above mean something only if ffmpeg could reach this server.
  it('the same URL read without the whitelist does reach the server, so the trap is live', async () => {
    await run(mediaBinaries().ffprobe, ['-v', 'error', '-show_format', `${base}/clip.mp4`]).catch(() => undefined);
    expect(requests).toContain('GET /clip.mp4');
  });

  it('a playlist uploaded as a video is refused before any decoder sees it', async () => {
    const disguised = path.join(dir, 'holiday.mp4');
    await fs.copyFile(await hlsPlaylist(), disguised);
    const err = await probeVideo(disguised).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(MediaRejected);
    expect((err as MediaRejected).code).toBe('not_a_video');
    expect(requests).toEqual([]);
  });

  it('still reads an ordinary file', async () => {
    const { stdout } = await runFfprobe(['-v', 'error', '-show_entries', 'format=format_name', '-of', 'default=nw=1:nk=1', clip], { what: 'read the video' });
    expect(stdout.toString('utf8').trim()).toBe('mov,mp4,m4a,3gp,3g2,mj2');
  });
});
