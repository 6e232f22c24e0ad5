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
/**
 * festival's text2wave and a US English voice narrate the demo clips (server/db/seed-clips.ts) and
 * the clips the listening tests upload; fonts-dseg draws the demo clips' instrument display.
 */
const VOICE_PACKAGES = ['festival', 'festvox-us-slt-hts', 'fonts-dseg'];
const VOICE_FILES = ['/usr/bin/text2wave', '/usr/share/festival/voices/us/cmu_us_slt_arctic_hts', '/usr/share/fonts/truetype/dseg/DSEG7Classic-Regular.ttf'];

/** ssocr reads seven-segment displays in clips; tesseract (digits only) reads other displays. */
const DISPLAY_PACKAGES = ['ssocr', 'tesseract-ocr'];
const DISPLAY_FILES = ['/usr/bin/ssocr', '/usr/bin/tesseract'];

/** What ensureSystemSpeech found or did. */
export interface SystemSpeech {
  /** pocketsphinx and its model are there: clips can be listened to. */
  recognizer: boolean;
  /** festival, its voice and the seven-segment font are there (the demo clips are narrated). */
  voice: boolean;
  /** ssocr and tesseract are there: instrument displays in clips can be read. */
  display: boolean;
  /** Packages this call installed. */
  installed: string[];
}

/**
 * Makes sure Debian's pocketsphinx (with its en-us model) is installed, as ffmpeg is: clips are
 * listened to with it, offline. As root the missing packages are installed with apt-get;
 * otherwise the command to run is printed and listening reports itself unavailable (clips show
 * the state "unavailable"; everything else works). festival, its voice and fonts-dseg come too:
 * the seed narrates the demo clips with them (silent clips without), and the tests narrate theirs.
 * They are installed in a second step, so a mirror without them never costs the recognizer; ssocr
 * and tesseract (reading instrument displays in clips) in a third.
 * `testVoice` is accepted for older callers; the voice is always wanted now.
 */
export function ensureSystemSpeech(_options: { testVoice?: boolean } = {}): SystemSpeech {
  const recognizerWanted = allThere(RECOGNIZER_FILES) ? [] : RECOGNIZER_PACKAGES;
  const voiceWanted = allThere(VOICE_FILES) ? [] : VOICE_PACKAGES;
  const displayWanted = allThere(DISPLAY_FILES) ? [] : DISPLAY_PACKAGES;
  const wanted = [...recognizerWanted, ...voiceWanted, ...displayWanted];
  const state = (installed: string[]): SystemSpeech => ({
    recognizer: allThere(RECOGNIZER_FILES),
    voice: allThere(VOICE_FILES),
    display: allThere(DISPLAY_FILES),
    installed,
  });
  if (wanted.length === 0) return state([]);
  const install = `apt-get install -y --no-install-recommends ${wanted.join(' ')}`;
  if (process.getuid?.() !== 0) {
    const without = [
      ...(recognizerWanted.length ? ['clips will not be listened to (their captions stay empty)'] : []),
      ...(voiceWanted.length ? ['the demo clips will be silent'] : []),
      ...(displayWanted.length ? ['instrument displays will not be read'] : []),
    ];
    log(`${wanted.join(', ')} not installed; ${without.join(' and ')}. Install with: sudo ${install}`);
    return state([]);
  }
  log(`not installed; installing Debian packages ${wanted.join(', ')} (apt-get)…`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  const aptGet = (args: string[]) => spawnSync('apt-get', args, { stdio: 'inherit', env }).status;
  const updated = aptGet(['update', '-q']);
  if (updated !== 0) {
    log(`apt-get update failed (exit ${updated}); clips will not be listened to until ${wanted.join(', ')} are installed.`);
    return state([]);
  }
  const installed: string[] = [];
  for (const [packages, without] of [
    [recognizerWanted, 'clips will not be listened to'],
    [voiceWanted, 'the demo clips will be silent'],
    [displayWanted, 'instrument displays will not be read'],
  ] as const) {
    if (packages.length === 0) continue;
    const status = aptGet(['install', '-y', '-q', '--no-install-recommends', ...packages]);
    if (status === 0) installed.push(...packages);
    else log(`apt-get install ${packages.join(' ')} failed (exit ${status}); ${without} until they are installed.`);
  }
  const after = state(installed);
  if (!after.recognizer) log('pocketsphinx or its en-us model is missing; clips will not be listened to.');
  if (installed.length) log(`installed: ${installed.join(', ')}`);
  return after;
}

function allThere(files: string[]): boolean {
  return files.every((f) => fs.existsSync(f));
}
