import fs from 'node:fs';

/* Plain 16-bit mono PCM WAV files, as festival writes them and the recognizers read them. */

/** The 16-bit mono samples of a RIFF WAV file and its sample rate. */
export function readWav(file: string): { rate: number; samples: Int16Array } {
  const buf = fs.readFileSync(file);
  if (buf.toString('latin1', 0, 4) !== 'RIFF' || buf.toString('latin1', 8, 12) !== 'WAVE') throw new Error(`${file} is not a WAV file`);
  let rate = 0;
  for (let at = 12; at + 8 <= buf.length; ) {
    const id = buf.toString('latin1', at, at + 4);
    const size = buf.readUInt32LE(at + 4);
    if (id === 'fmt ') {
      const channels = buf.readUInt16LE(at + 10);
      const bits = buf.readUInt16LE(at + 22);
      if (channels !== 1 || bits !== 16) throw new Error(`${file}: expected 16-bit mono, got ${bits}-bit × ${channels}`);
      rate = buf.readUInt32LE(at + 12);
    }
    if (id === 'data') {
      const data = buf.subarray(at + 8, at + 8 + size);
      const samples = new Int16Array(data.length >> 1);
      for (let i = 0; i < samples.length; i++) samples[i] = data.readInt16LE(i * 2);
      return { rate, samples };
    }
    at += 8 + size + (size % 2);
  }
  throw new Error(`${file} has no data chunk`);
}

/** Writes 16-bit mono samples as a plain 44-byte-header WAV. */
export function writeWav(file: string, rate: number, samples: Int16Array): void {
  const data = Buffer.alloc(samples.length * 2);
  for (let i = 0; i < samples.length; i++) data.writeInt16LE(samples[i]!, i * 2);
  const header = Buffer.alloc(44);
  header.write('RIFF', 0, 'latin1');
  header.writeUInt32LE(36 + data.length, 4);
  header.write('WAVEfmt ', 8, 'latin1');
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(1, 20);
  header.writeUInt16LE(1, 22);
  header.writeUInt32LE(rate, 24);
  header.writeUInt32LE(rate * 2, 28);
  header.writeUInt16LE(2, 32);
  header.writeUInt16LE(16, 34);
  header.write('data', 36, 'latin1');
  header.writeUInt32LE(data.length, 40);
  fs.writeFileSync(file, Buffer.concat([header, data]));
}
