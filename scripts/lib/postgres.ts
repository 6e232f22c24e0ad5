import { execFileSync, spawnSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';

/** A PostgreSQL cluster of the project's own, on loopback only. */
export interface LocalPostgres {
  dataDir: string;
  port: number;
  /** True when this process started the server (and so should stop it). */
  startedHere: boolean;
  stop(): void;
}

const log = (msg: string) => console.log(`[postgres] ${msg}`);

/** Finds Debian's PostgreSQL server binaries (newest major first), installing them when missing. */
export function findOrInstallServerBinaries(): string {
  const found = findBinDir();
  if (found) return found;
  if (process.getuid?.() !== 0) {
    throw new Error(
      'No PostgreSQL server binaries found. Install them with: sudo apt-get install -y postgresql ' +
        '(or set DATABASE_URL to a server you run yourself).',
    );
  }
  log('server binaries missing; installing Debian package "postgresql" (apt-get)…');
  run('apt-get', ['update', '-q']);
  run('apt-get', ['install', '-y', '-q', '--no-install-recommends', 'postgresql'], { DEBIAN_FRONTEND: 'noninteractive' });
  const after = findBinDir();
  if (!after) throw new Error('apt-get finished but no PostgreSQL server binaries were found under /usr/lib/postgresql.');
  return after;
}

function findBinDir(): string | null {
  const base = '/usr/lib/postgresql';
  if (fs.existsSync(base)) {
    const versions = fs
      .readdirSync(base)
      .filter((v) => fs.existsSync(path.join(base, v, 'bin', 'pg_ctl')))
      .sort((a, b) => Number(b) - Number(a));
    if (versions[0]) return path.join(base, versions[0], 'bin');
  }
  const r = spawnSync('pg_config', ['--bindir'], { encoding: 'utf8' });
  const dir = r.status === 0 ? r.stdout.trim() : '';
  return dir && fs.existsSync(path.join(dir, 'pg_ctl')) ? dir : null;
}

function run(cmd: string, args: string[], env: Record<string, string> = {}) {
  const r = spawnSync(cmd, args, { stdio: 'inherit', env: { ...process.env, ...env } });
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (exit ${r.status})`);
}

/** Root may not run the server: run it as the unprivileged "postgres" user, made if missing. */
function serverUser(): string | null {
  if (process.getuid?.() !== 0) return null;
  if (spawnSync('id', ['-u', 'postgres']).status !== 0) {
    run('useradd', ['--system', '--no-create-home', '--shell', '/usr/sbin/nologin', 'postgres']);
  }
  return 'postgres';
}

function asServerUser(user: string | null, cmd: string, args: string[]) {
  const [file, argv] = user ? ['runuser', ['-u', user, '--', cmd, ...args]] : [cmd, args];
  return spawnSync(file, argv, { encoding: 'utf8' });
}

/**
 * Picks the data folder: the wanted one, unless the server user cannot reach it (a checkout
 * inside a folder only root may enter), in which case a per-checkout folder under the temp dir.
 */
function usableDataDir(wanted: string, user: string | null): string {
  if (!user) return wanted;
  fs.mkdirSync(path.dirname(wanted), { recursive: true });
  if (asServerUser(user, 'test', ['-x', path.dirname(wanted)]).status === 0) return wanted;
  const tag = crypto.createHash('sha256').update(wanted).digest('hex').slice(0, 12);
  const fallback = path.join(os.tmpdir(), `benchproof-${tag}`, path.basename(wanted));
  log(`user "${user}" cannot enter ${path.dirname(wanted)}; using ${fallback}`);
  return fallback;
}

/**
 * Makes sure a cluster exists in `dataDir` and a server for it listens on 127.0.0.1:port.
 * A server already running for that folder is reused (and then not stopped by us).
 */
export function ensurePostgres(opts: { dataDir: string; port: number; throwaway?: boolean }): LocalPostgres {
  const bin = findOrInstallServerBinaries();
  const user = serverUser();
  const dataDir = usableDataDir(path.resolve(opts.dataDir), user);
  const pgCtl = path.join(bin, 'pg_ctl');

  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) {
    log(`creating a cluster in ${dataDir}`);
    // The parents stay enterable by the server user; only the cluster folder is theirs, 0700.
    fs.mkdirSync(path.dirname(dataDir), { recursive: true, mode: 0o755 });
    if (user) fs.chmodSync(path.dirname(dataDir), 0o755);
    fs.mkdirSync(dataDir, { recursive: true, mode: 0o700 });
    if (user) execFileSync('chown', ['-R', `${user}:`, dataDir]);
    const r = asServerUser(user, path.join(bin, 'initdb'), [
      '-D', dataDir, '-U', 'postgres', '--auth=trust', '-E', 'UTF8', '--no-locale', '--no-instructions',
    ]);
    if (r.status !== 0) throw new Error(`initdb failed:\n${r.stdout}\n${r.stderr}`);
  }

  const status = asServerUser(user, pgCtl, ['status', '-D', dataDir]);
  if (status.status === 0) {
    log(`already running for ${dataDir}`);
    return { dataDir, port: opts.port, startedHere: false, stop: () => {} };
  }

  const logFile = path.join(dataDir, 'server.log');
  // Loopback TCP only; no Unix socket, so path length and socket permissions never matter.
  const serverOpts = `-c listen_addresses=127.0.0.1 -p ${opts.port} -c unix_socket_directories=''${
    // A throwaway test cluster need not survive a power cut; skipping fsync makes tests faster.
    opts.throwaway ? ' -c fsync=off -c synchronous_commit=off -c full_page_writes=off' : ''
  }`;
  const start = asServerUser(user, pgCtl, ['start', '-D', dataDir, '-l', logFile, '-w', '-t', '60', '-o', serverOpts]);
  if (start.status !== 0) {
    const tail = fs.existsSync(logFile) ? fs.readFileSync(logFile, 'utf8').split('\n').slice(-15).join('\n') : '';
    throw new Error(`PostgreSQL did not start on 127.0.0.1:${opts.port}.\n${start.stderr}\n${tail}`);
  }
  log(`listening on 127.0.0.1:${opts.port} (${dataDir})`);
  let stopped = false;
  return {
    dataDir,
    port: opts.port,
    startedHere: true,
    stop() {
      if (stopped) return;
      stopped = true;
      asServerUser(user, pgCtl, ['stop', '-D', dataDir, '-m', 'fast', '-w']);
      log('stopped');
    },
  };
}

/** Creates the login role and database when missing; returns the database URL. */
export async function ensureDatabase(opts: { port: number; database: string; user: string; fresh?: boolean }) {
  const admin = new pg.Client({ host: '127.0.0.1', port: opts.port, user: 'postgres', database: 'postgres' });
  await admin.connect();
  try {
    const ident = (s: string) => `"${s.replace(/"/g, '""')}"`;
    const role = await admin.query('SELECT 1 FROM pg_roles WHERE rolname = $1', [opts.user]);
    if (role.rowCount === 0) await admin.query(`CREATE ROLE ${ident(opts.user)} LOGIN`);
    if (opts.fresh) await admin.query(`DROP DATABASE IF EXISTS ${ident(opts.database)} WITH (FORCE)`);
    const db = await admin.query('SELECT 1 FROM pg_database WHERE datname = $1', [opts.database]);
    if (db.rowCount === 0) await admin.query(`CREATE DATABASE ${ident(opts.database)} OWNER ${ident(opts.user)}`);
  } finally {
    await admin.end();
  }
  return `postgres://${encodeURIComponent(opts.user)}@127.0.0.1:${opts.port}/${encodeURIComponent(opts.database)}`;
}
