import { describe, expect, it } from 'vitest';
import { commandLine, loadConfig } from '../../../server/config';
import { commandRecognizer, parsePocketsphinxTimes } from '../../../server/features/speech/recognizer';

describe('pocketsphinx', () => {
  it('reads pocketsphinx_continuous -time yes output: hypothesis lines skipped, times in ms', () => {
    // As printed by pocketsphinx 0.8+5prealpha (Debian bookworm) for a narrated clip.
    const out = [
      'the depth raids five hundred sixty four and two tenths',
      '<s> 0.100 0.140 0.999900',
      'five 1.050 1.390 0.999800',
      'hundred(4) 1.400 1.820 0.378813',
      'tenths 3.000 3.500 1.000000',
      '</s> 3.510 3.600 1.000100',
    ].join('\n');
    expect(parsePocketsphinxTimes(out)).toEqual([
      { word: '<s>', startMs: 100, endMs: 140, confidence: 0.9999 },
      { word: 'five', startMs: 1050, endMs: 1390, confidence: 0.9998 },
      { word: 'hundred(4)', startMs: 1400, endMs: 1820, confidence: 0.378813 },
      { word: 'tenths', startMs: 3000, endMs: 3500, confidence: 1 },
      { word: '</s>', startMs: 3510, endMs: 3600, confidence: 1.0001 },
    ]);
  });
});

describe('SPEECH_COMMAND', () => {
  it('is split into program and arguments as a shell would for simple cases, without running one', () => {
    expect(commandLine('my-asr --json {wav}')).toEqual(['my-asr', '--json', '{wav}']);
    expect(commandLine(`"/opt/asr tools/run" --model 'en us' {wav}`)).toEqual(['/opt/asr tools/run', '--model', 'en us', '{wav}']);
    expect(commandLine('asr $(rm -rf ~) ; echo')).toEqual(['asr', '$(rm', '-rf', '~)', ';', 'echo']);
    expect(commandLine('"unclosed')).toBeNull();
  });

  it('is refused at start when a quote is left open, and absent means pocketsphinx', () => {
    expect(() => loadConfig({ SPEECH_COMMAND: 'asr "x' })).toThrow(/SPEECH_COMMAND: a quote is not closed/);
    expect(loadConfig({}).speech).toMatchObject({ enabled: true, command: null, modelDir: '/usr/share/pocketsphinx/model/en-us' });
  });

  it('names a program that is not installed as the reason it is unavailable', () => {
    expect(commandRecognizer(['/nonexistent/asr', '{wav}']).unavailableBecause()).toMatch(/not installed/);
    expect(commandRecognizer(['sh', '-c', 'true'], '/usr/bin:/bin').unavailableBecause()).toBeNull();
  });
});
