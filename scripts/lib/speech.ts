import { spawnSync } from 'node:child_process';
import fs from 'node:fs';

const log = (msg: string) => console.log(`[speech] ${msg}`);

/** Debian's offline recognizer and its US English model (acoustic model, language model, dictionary). */
const RECOGNIZER_PACKAGES = ['pocketsphinx', 'pocketsphinx-en-us'];
const RECOGNIZER_FILES = [
  '/usr/bin/pocketsphinx_continuous',
  '/usr/share/pocketsphinx/model/en-us/en-us',
  '/usr/share/pocketsphinx/model/en-us/en-us.lm.bin',
  '/usr/share/pocketsphinx/model/en-us/cmudict-en-us.dict',
];
/** Test only: festival's text2wave and a US English voice narrate the clip the listening test uploads. */
const VOICE_PACKAGES = ['festival', 'festvox-us-slt-hts'];
const VOICE_FILES = ['/usr/bin/text2wave', '/usr/share/festival/voices/us/cmu_us_slt_arctic_hts'];

/** What ensureSystemSpeech found or did. */
export interface SystemSpeech {
  /** pocketsphinx and its model are there: clips can be listened to. */
  recognizer: boolean;
  /** festival and its voice are there (asked for by `npm test` only). */
  voice: boolean;
  /** Packages this call installed. */
  installed: string[];
}

/**
 * Makes sure Debian's pocketsphinx (with its en-us model) is installed, as ffmpeg is: clips are
 * listened to with it, offline. As root the missing packages are installed with apt-get;
 * otherwise the command to run is printed and listening reports itself unavailable (clips show
 * the state "unavailable"; everything else works). `testVoice` also installs festival and a
 * voice, with which the tests narrate a clip.
 */
export function ensureSystemSpeech(options: { testVoice?: boolean } = {}): SystemSpeech {
  const wanted: string[] = [];
  if (!allThere(RECOGNIZER_FILES)) wanted.push(...RECOGNIZER_PACKAGES);
  if (options.testVoice && !allThere(VOICE_FILES)) wanted.push(...VOICE_PACKAGES);
  const state = (installed: string[]): SystemSpeech => ({
    recognizer: allThere(RECOGNIZER_FILES),
    voice: allThere(VOICE_FILES),
    installed,
  });
  if (wanted.length === 0) return state([]);
  const install = `apt-get install -y --no-install-recommends ${wanted.join(' ')}`;
  if (process.getuid?.() !== 0) {
    log(`${wanted.join(', ')} not installed; clips will not be listened to (their captions stay empty). Install with: sudo ${install}`);
    return state([]);
  }
  log(`not installed; installing Debian packages ${wanted.join(', ')} (apt-get)…`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  const steps: string[][] = [
    ['update', '-q'],
    ['install', '-y', '-q', '--no-install-recommends', ...wanted],
  ];
  for (const args of steps) {
    const r = spawnSync('apt-get', args, { stdio: 'inherit', env });
    if (r.status !== 0) {
      log(`apt-get ${args.join(' ')} failed (exit ${r.status}); clips will not be listened to until ${wanted.join(', ')} are installed.`);
      return state([]);
    }
  }
  const after = state(wanted);
  if (!after.recognizer) log('apt-get finished but pocketsphinx or its en-us model is missing; clips will not be listened to.');
  else log(`installed: ${wanted.join(', ')}`);
  return after;
}

function allThere(files: string[]): boolean {
  return files.every((f) => fs.existsSync(f));
}
