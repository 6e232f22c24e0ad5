import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { Response } from 'express';
import { assertSafeKey, type Storage, type StoredObject } from './storage';

/** Media on local disk under one root folder (default `media/`). */
export function localStorage(rootDir: string): Storage {
  const root = path.resolve(rootDir);
  const scratch = path.join(root, '.scratch');
  fs.mkdirSync(scratch, { recursive: true });

  const pathOf = (key: string) => {
    assertSafeKey(key);
    const full = path.resolve(root, key);
    // Belt and braces: the resolved path must stay inside the root.
    if (!full.startsWith(root + path.sep)) throw new Error(`storage key escapes the media folder: ${key}`);
    return full;
  };

  return {
    async putFile(key, localPath, opts) {
      const target = pathOf(key);
      await fsp.mkdir(path.dirname(target), { recursive: true });
      await fsp.rename(localPath, target);
      if (opts.readOnly) await fsp.chmod(target, 0o444);
    },
    async stat(key) {
      const file = pathOf(key); // an unsafe key throws here, not hidden as "missing"
      try {
        const st = await fsp.stat(file);
        return st.isFile() ? { size: st.size } : null;
      } catch {
        return null;
      }
    },
    send(res: Response, key, opts) {
      return new Promise((resolve, reject) => {
        res.sendFile(
          pathOf(key),
          {
            acceptRanges: true,
            lastModified: true,
            maxAge: (opts.cacheSeconds ?? 0) * 1000,
            headers: { 'Content-Type': opts.contentType, 'X-Content-Type-Options': 'nosniff' },
            dotfiles: 'deny',
          },
          (err) => (err && !res.headersSent ? reject(err) : resolve()),
        );
      });
    },
    async localCopy(key) {
      return { path: pathOf(key), release: async () => {} };
    },
    async deletePrefix(prefix) {
      const dir = pathOf(prefix);
      // Originals are read-only files; the folder is writable, so rm can still unlink them.
      await fsp.rm(dir, { recursive: true, force: true });
    },
    async list(prefix) {
      const dir = prefix ? pathOf(prefix) : root;
      let entries: fs.Dirent[];
      try {
        entries = await fsp.readdir(dir, { recursive: true, withFileTypes: true });
      } catch (err) {
        if ((err as NodeJS.ErrnoException).code === 'ENOENT') return [];
        throw err;
      }
      const found: StoredObject[] = [];
      for (const entry of entries) {
        if (!entry.isFile()) continue;
        const key = path.relative(root, path.join(entry.parentPath, entry.name)).split(path.sep).join('/');
        // Scratch work, and the atomic writers' hidden part files, are not stored objects.
        if (key.split('/').some((part) => part.startsWith('.'))) continue;
        try {
          const st = await fsp.stat(path.join(entry.parentPath, entry.name));
          found.push({ key, size: st.size, modified: st.mtime });
        } catch {
          // Deleted while we listed: not there any more.
        }
      }
      return found;
    },
    async delete(key) {
      await fsp.rm(pathOf(key), { force: true });
    },
    scratchDir: () => scratch,
  };
}
