import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { loadConfig, type Config } from '../../server/config';
import { createFakeGithub } from '../../server/fakes/github/fake-github';
import { createFakeSmtp } from '../../server/fakes/smtp/fake-smtp';
import { loadDemoPeople } from '../../server/db/demo-content';
import { prepareDatabase, repoRoot } from './bootstrap';
import { ensureSystemFfmpeg } from './ffmpeg';
import { ensureSystemSpeech } from './speech';

/** Ports and folders of the local instance; each one can be overridden from the environment. */
export function localSettings(env = process.env) {
  return {
    pgPort: Number(env.BENCHPROOF_PG_PORT ?? 54320),
    dataDir: path.resolve(repoRoot, env.BENCHPROOF_DATA_DIR ?? '.data/postgres'),
    database: env.BENCHPROOF_DB_NAME ?? 'benchproof',
  };
}

/** A random session secret made once per checkout and kept in .data (git-ignored). */
function localSessionSecret(): string {
  const file = path.join(repoRoot, '.data', 'session-secret');
  if (!fs.existsSync(file)) {
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, crypto.randomBytes(32).toString('hex'), { mode: 0o600 });
  }
  return fs.readFileSync(file, 'utf8').trim();
}

/** The demo people as the fake provider's accounts. */
export function fakeAccounts() {
  return loadDemoPeople().map((p) => ({
    login: p.login,
    id: p.githubId,
    name: p.name,
    email: p.email,
    note: `${p.role}${p.shop ? ` · ${p.shop}` : ''} (invented demo person)`,
  }));
}

/**
 * The shared part of `npm start` and `npm run dev`: Debian's ffmpeg there (installed when
 * missing), database ready, fakes running, config built. Returns the config and a function that
 * stops everything started here.
 */
export async function bringUpLocal(overrides: Record<string, string> = {}) {
  ensureSystemFfmpeg();
  ensureSystemSpeech();
  const s = localSettings();
  // The invented demo people are for the local fake provider only, never next to real GitHub.
  const realGithub = Boolean(process.env.GITHUB_CLIENT_ID && process.env.GITHUB_CLIENT_SECRET);
  const db = await prepareDatabase({
    databaseUrl: process.env.DATABASE_URL,
    dataDir: s.dataDir,
    port: s.pgPort,
    database: s.database,
    seed: !realGithub,
  });
  if (db.migrated.length) console.log(`[db] migrations run: ${db.migrated.join(', ')}`);
  if (db.seed?.created.length) console.log(`[db] demo data created: ${db.seed.created.join(', ')}`);

  const config: Config = loadConfig({
    ...process.env,
    DATABASE_URL: db.databaseUrl,
    SESSION_SECRET: process.env.SESSION_SECRET ?? localSessionSecret(),
    ...overrides,
  });
  const stops: (() => Promise<void> | void)[] = [() => db.postgres?.stop()];
  if (config.github.fake) {
    const fake = createFakeGithub({
      clientId: config.github.clientId,
      clientSecret: config.github.clientSecret,
      accounts: fakeAccounts(),
      port: Number(new URL(config.github.webBase).port),
    });
    const url = await fake.listen();
    console.log(`[fake-github] sign-in provider on ${url}`);
    stops.unshift(() => fake.close());
  }
  if (config.mail.fake) {
    const smtp = createFakeSmtp({ smtpPort: config.mail.fakePorts.smtp, apiPort: config.mail.fakePorts.api });
    const urls = await smtp.listen();
    console.log(`[fake-smtp] mail capture on ${urls.smtpUrl} (messages listed for admins at /admin/outbox)`);
    stops.unshift(() => smtp.close());
  }
  return {
    config,
    async stopAll() {
      for (const stop of stops) await stop();
    },
  };
}

/** Runs `stop` once on Ctrl-C or SIGTERM, then exits. */
export function onShutdown(stop: () => Promise<void>) {
  let stopping = false;
  for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
    process.on(signal, () => {
      if (stopping) return;
      stopping = true;
      console.log(`\n[benchproof] ${signal}: stopping…`);
      stop().then(
        () => process.exit(0),
        (err) => {
          console.error(err);
          process.exit(1);
        },
      );
    });
  }
}

/** The demo sign-ins, printed at start. */
export function demoSignInLines(baseUrl: string) {
  return loadDemoPeople().map(
    (p) => `  ${p.login.padEnd(16)} ${p.role.padEnd(10)} ${p.name}   ${baseUrl}/auth/github?login=${p.login}`,
  );
}
