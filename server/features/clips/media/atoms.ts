import fsp from 'node:fs/promises';

/** One top-level box of an ISO BMFF (MP4/MOV) file. */
export interface Atom {
  type: string;
  offset: number;
  size: number;
}

/** The atoms read, and whether the file stops inside the last one. */
export interface AtomScan {
  atoms: Atom[];
  /** True when the last atom claims to end after the end of the file: the file was cut short. */
  truncated: boolean;
}

/**
 * The top-level atoms of an MP4/MOV file, read from their 8/16-byte headers only (a few reads
 * even for gigabytes). Stops at the first header that makes no sense, so a non-MP4 file gives
 * an empty or short list rather than an error.
 */
export async function readTopLevelAtoms(file: string, maxAtoms = 64): Promise<AtomScan> {
  const fh = await fsp.open(file, 'r');
  try {
    const fileSize = (await fh.stat()).size;
    const atoms: Atom[] = [];
    const header = Buffer.alloc(16);
    let offset = 0;
    while (offset + 8 <= fileSize && atoms.length < maxAtoms) {
      const { bytesRead } = await fh.read(header, 0, 16, offset);
      if (bytesRead < 8) break;
      let size = header.readUInt32BE(0);
      const type = header.toString('latin1', 4, 8);
      if (!/^[\x20-\x7e]{4}$/.test(type)) break;
      if (size === 1) {
        if (bytesRead < 16) break;
        size = Number(header.readBigUInt64BE(8));
      } else if (size === 0) {
        size = fileSize - offset; // "to the end of the file"
      }
      if (size < 8) break;
      atoms.push({ type, offset, size });
      if (offset + size > fileSize) return { atoms, truncated: true };
      offset += size;
    }
    return { atoms, truncated: false };
  } finally {
    await fh.close();
  }
}

/**
 * Whether the index (`moov`) comes before the media data (`mdat`), so a browser can start
 * playing before it has the whole file ("fast start"). Null when neither atom is found.
 */
export async function moovBeforeMdat(file: string): Promise<boolean | null> {
  const { atoms } = await readTopLevelAtoms(file);
  for (const atom of atoms) {
    if (atom.type === 'moov') return true;
    if (atom.type === 'mdat') return false;
  }
  return null;
}
