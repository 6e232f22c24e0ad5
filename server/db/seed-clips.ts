import { execFile } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { promisify } from 'node:util';
import type { Logger } from 'pino';
import { Build } from '../features/builds/build.model';
import { Clip, Moment } from '../features/clips/clip.model';
import { enqueueClip } from '../features/clips/clip.job';
import { acceptUpload } from '../features/clips/clips.service';
import { mediaBinaries } from '../features/clips/media/binaries';
import { setDisplayRegion } from '../features/speech/display.service';
import { User } from '../features/users/user.model';
import type { Config } from '../config';
import type { Queue } from '../jobs/queue';
import type { Storage } from '../storage/storage';
import { loadDemoBuilds, type DemoClip } from './demo-content';

const run = promisify(execFile);
const fonts = ['/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf', '/usr/share/fonts/truetype/liberation/LiberationSans-Regular.ttf'];
/** Debian's fonts-dseg: a seven-segment face for the instrument display. */
const SEGMENT_FONT = '/usr/share/fonts/truetype/dseg/DSEG7Classic-Regular.ttf';
/** Debian's festival and festvox-us-slt-hts (scripts/lib/speech.ts installs them). */
const TEXT2WAVE = '/usr/bin/text2wave';
const VOICE = '(voice_cmu_us_slt_arctic_hts)';
const VOICE_DIR = '/usr/share/festival/voices/us/cmu_us_slt_arctic_hts';
/** The line starts this long before its moment, so the figure is said around the moment. */
const LEAD_MS = 600;
/** Where the instrument display is drawn in the 640×360 scene, pixels. */
const DISPLAY_BOX = { x: 360, y: 110, w: 250, h: 110 } as const;
/** The region a builder would mark around it: 10 px more each side, as fractions of the frame. */
const DISPLAY_REGION = {
  x: (DISPLAY_BOX.x - 10) / 640,
  y: (DISPLAY_BOX.y - 10) / 360,
  width: (DISPLAY_BOX.w + 20) / 640,
  height: (DISPLAY_BOX.h + 20) / 360,
};
/** The instrument display shows the figure from 1 s before to 2 s after the moment. */
const SHOW_BEFORE_S = 1;
const SHOW_AFTER_S = 2;
const SAMPLE_RATE = 16000;

// Inside drawtext's single quotes an apostrophe cannot be escaped: it is drawn as ’ instead.
const text = (s: string) => s.replace(/'/g, '’').replace(/[\\:%]/g, (c) => `\\${c}`);

/**
 * Gives the invented demo builds their clips: a bench-coloured scene with the caption naming the
 * step, a running timer, an instrument display showing each moment's figure around the moment,
 * and the builder's line about it spoken by festival (a silent track when festival is missing),
 * so evidence stills, captions, proposals and the second witness exist without shipping media
 * files. Runs only for demo builds that have no clip yet, so a second start adds nothing.
 */
export async function seedDemoClips(deps: { config: Config; storage: Storage; queue: Queue; logger: Logger }) {
  const font = fonts.find((f) => fs.existsSync(f));
  const segments = fs.existsSync(SEGMENT_FONT) ? SEGMENT_FONT : font;
  const voice = fs.existsSync(TEXT2WAVE) && fs.existsSync(VOICE_DIR);
  if (!voice) deps.logger.warn(`demo clips: ${TEXT2WAVE} or its voice is missing (Debian festival, festvox-us-slt-hts); the clips will be silent`);
  let made = 0;
  for (const demo of loadDemoBuilds()) {
    if (!demo.clips.length) continue;
    const owner = await User.findOne({ where: { login: demo.owner } });
    const build = owner && (await Build.findOne({ where: { ownerId: owner.id, title: demo.title } }));
    if (!build || (await Clip.count({ where: { buildId: build.id } })) > 0) continue;
    for (const spec of demo.clips) {
      const work = fs.mkdtempSync(path.join(deps.storage.scratchDir(), 'demo-'));
      try {
        const file = path.join(work, `demo-${crypto.randomUUID()}.mp4`);
        const lines = voice ? await speak(spec, work, deps.logger) : [];
        await run(mediaBinaries().ffmpeg, sceneArgs(spec, lines, file, font, segments));
        const clip = await acceptUpload(
          { storage: deps.storage, maxSeconds: deps.config.uploads.maxSeconds, clipsPerBuild: deps.config.uploads.clipsPerBuild },
          build.id,
          { path: file, originalname: `${spec.title}.mp4`, size: fs.statSync(file).size },
          spec.title,
        );
        for (const m of spec.moments) await Moment.create({ clipId: clip.id, atMs: m.atMs, label: m.label, createdBy: owner.id });
        // The builder's box around the display (a little larger than the drawn display), read once the clip is ready.
        if (spec.displayUnit) await setDisplayRegion(clip, owner, DISPLAY_REGION, spec.displayUnit);
        await enqueueClip(deps.queue, clip.id);
        made += 1;
      } finally {
        fs.rmSync(work, { recursive: true, force: true });
      }
    }
  }
  if (made) deps.logger.info(`demo clips generated: ${made}`);
  return made;
}

/** Each moment's line as a WAV said by festival, with when it starts (ms); a line festival fails on is left out. */
async function speak(spec: DemoClip, dir: string, logger: Logger): Promise<{ startMs: number; wav: string }[]> {
  const said: { startMs: number; wav: string }[] = [];
  for (const [i, m] of spec.moments.entries()) {
    if (!m.say) continue;
    const txt = path.join(dir, `line-${i}.txt`);
    const wav = path.join(dir, `line-${i}.wav`);
    fs.writeFileSync(txt, `${m.say}\n`);
    try {
      await run(TEXT2WAVE, ['-F', String(SAMPLE_RATE), '-eval', VOICE, '-o', wav, txt], { timeout: 60_000 });
      said.push({ startMs: Math.max(0, m.atMs - LEAD_MS), wav });
    } catch (err) {
      logger.warn({ err }, `demo clip "${spec.title}": festival could not say "${m.say}"; left silent`);
    }
  }
  return said;
}

/** ffmpeg's arguments for the scene: background, caption, timer, instrument display, the lines mixed into one mono track. */
function sceneArgs(spec: DemoClip, lines: { startMs: number; wav: string }[], file: string, font: string | undefined, segments: string | undefined): string[] {
  const video: string[] = [];
  if (font) {
    video.push(
      `drawtext=fontfile=${font}:text='${text(spec.caption)}':x=16:y=h-44:fontsize=20:fontcolor=white:box=1:boxcolor=black@0.7:boxborderw=8`,
      `drawtext=fontfile=${font}:text='%{pts\\:hms}':x=16:y=16:fontsize=28:fontcolor=white:box=1:boxcolor=black@0.7:boxborderw=6`,
    );
  }
  // The instrument display: a dark box at the right, the figure in seven segments (a bracket's two blades either side of a bar).
  const box = DISPLAY_BOX;
  const mid = box.x + box.w / 2;
  const figureY = `${box.y + box.h / 2}-text_h/2`;
  for (const m of spec.moments) {
    if (!m.show) continue;
    const t = m.atMs / 1000;
    const on = `enable='between(t,${Math.max(0, t - SHOW_BEFORE_S)},${t + SHOW_AFTER_S})'`;
    video.push(`drawbox=x=${box.x}:y=${box.y}:w=${box.w}:h=${box.h}:color=0x101314@0.95:t=fill:${on}`);
    if (!segments) continue;
    const digit = `fontfile=${segments}:fontsize=40:fontcolor=0xff5a36`;
    const [passes, stops] = m.show.split('|');
    if (stops === undefined || !font) {
      video.push(`drawtext=${digit}:text='${text(m.show)}':x=${mid}-text_w/2:y=${figureY}:${on}`);
    } else {
      video.push(
        `drawtext=${digit}:text='${text(passes ?? '')}':x=${mid - 18}-text_w:y=${figureY}:${on}`,
        `drawtext=fontfile=${font}:fontsize=44:fontcolor=0xff5a36:text='|':x=${mid}-text_w/2:y=${figureY}:${on}`,
        `drawtext=${digit}:text='${text(stops)}':x=${mid + 18}:y=${figureY}:${on}`,
      );
    }
  }
  // One mono track of the clip's length: silence, with each line laid at its start.
  const inputs = lines.flatMap((l) => ['-i', l.wav]);
  const delayed = lines.map((l, i) => `[${i + 2}:a]aresample=${SAMPLE_RATE},adelay=${l.startMs}:all=1[l${i}]`);
  const mix = lines.length
    ? `${delayed.join(';')};[1:a]${lines.map((_, i) => `[l${i}]`).join('')}amix=inputs=${lines.length + 1}:duration=first:normalize=0[a]`
    : '[1:a]anull[a]';
  return [
    '-v', 'error', '-y',
    '-f', 'lavfi', '-i', `color=c=0x2b2f33:size=640x360:rate=30:duration=${spec.seconds}`,
    '-f', 'lavfi', '-i', `anullsrc=r=${SAMPLE_RATE}:cl=mono:d=${spec.seconds}`,
    ...inputs,
    '-filter_complex', `[0:v]${video.length ? video.join(',') : 'null'}[v];${mix}`,
    '-map', '[v]', '-map', '[a]',
    '-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p',
    '-c:a', 'aac', '-b:a', '96k', '-ac', '1',
    '-t', String(spec.seconds), '-movflags', '+faststart',
    file,
  ];
}
