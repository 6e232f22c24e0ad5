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
import { User } from '../features/users/user.model';
import type { Config } from '../config';
import type { Queue } from '../jobs/queue';
import type { Storage } from '../storage/storage';
import { loadDemoBuilds } from './demo-content';

const run = promisify(execFile);
const fonts = ['/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf', '/usr/share/fonts/truetype/liberation/LiberationSans-Regular.ttf'];

/**
 * Gives the invented demo builds their clips: generated test patterns with a caption naming the
 * step and a running timer, so evidence stills exist without shipping video files. Runs only
 * for demo builds that have no clip yet, so a second start adds nothing.
 */
export async function seedDemoClips(deps: { config: Config; storage: Storage; queue: Queue; logger: Logger }) {
  const font = fonts.find((f) => fs.existsSync(f));
  let made = 0;
  for (const demo of loadDemoBuilds()) {
    if (!demo.clips.length) continue;
    const owner = await User.findOne({ where: { login: demo.owner } });
    const build = owner && (await Build.findOne({ where: { ownerId: owner.id, title: demo.title } }));
    if (!build || (await Clip.count({ where: { buildId: build.id } })) > 0) continue;
    for (const spec of demo.clips) {
      const file = path.join(deps.storage.scratchDir(), `demo-${crypto.randomUUID()}.mp4`);
      // Inside drawtext's single quotes an apostrophe cannot be escaped: it is drawn as ’ instead.
      const text = (s: string) => s.replace(/'/g, '’').replace(/[\\:%]/g, (c) => `\\${c}`);
      const filters = font
        ? [
            `drawtext=fontfile=${font}:text='${text(spec.caption)}':x=16:y=h-44:fontsize=20:fontcolor=white:box=1:boxcolor=black@0.7:boxborderw=8`,
            `drawtext=fontfile=${font}:text='%{pts\\:hms}':x=16:y=16:fontsize=28:fontcolor=white:box=1:boxcolor=black@0.7:boxborderw=6`,
          ]
        : [];
      await run(mediaBinaries().ffmpeg, [
        '-v', 'error', '-y',
        '-f', 'lavfi', '-i', `testsrc2=size=640x360:rate=30:duration=${spec.seconds}`,
        ...(filters.length ? ['-vf', filters.join(',')] : []),
        '-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p', '-movflags', '+faststart', '-an',
        file,
      ]);
      const clip = await acceptUpload(
        { storage: deps.storage, maxSeconds: deps.config.uploads.maxSeconds, clipsPerBuild: deps.config.uploads.clipsPerBuild },
        build.id,
        { path: file, originalname: `${spec.title}.mp4`, size: fs.statSync(file).size },
        spec.title,
      );
      for (const m of spec.moments) await Moment.create({ clipId: clip.id, atMs: m.atMs, label: m.label, createdBy: owner.id });
      await enqueueClip(deps.queue, clip.id);
      made += 1;
    }
  }
  if (made) deps.logger.info(`demo clips generated: ${made}`);
  return made;
}
