import { z } from 'zod';
import type { StorageSettings } from './storage/select-storage';

const port = z.coerce.number().int().min(0).max(65535);

/**
 * Every setting the server reads from the environment, parsed once. Nothing else in the
 * server reads process.env; code receives a Config.
 */
const envSchema = z.object({
  NODE_ENV: z.enum(['development', 'test', 'production']).default('development'),
  HOST: z.string().default('127.0.0.1'),
  PORT: port.default(3000),
  /** Public base URL of the site, used for OAuth callbacks and e-mail links. */
  PUBLIC_URL: z.string().url().optional(),
  DATABASE_URL: z.string().default('postgres://benchproof@127.0.0.1:54320/benchproof'),
  /** Required in production (npm start makes one per checkout in .data/session-secret). */
  SESSION_SECRET: z.string().min(16).optional(),
  /** A session with no request for this long ends (idle timeout). */
  SESSION_IDLE_HOURS: z.coerce.number().positive().max(24 * 30).default(72),
  /** A session ends this long after sign-in, however busy (absolute timeout). */
  SESSION_MAX_DAYS: z.coerce.number().positive().max(365).default(30),
  /** Set both to use the real GitHub; leave both unset to use the local fake provider. */
  GITHUB_CLIENT_ID: z.string().optional(),
  GITHUB_CLIENT_SECRET: z.string().optional(),
  FAKE_GITHUB_PORT: port.default(3101),
  FAKE_GITHUB_URL: z.string().url().optional(),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /** "1" marks the cookie Secure even without a TLS-terminating proxy header. */
  COOKIE_SECURE: z.enum(['0', '1', 'auto']).default('auto'),
  TRUST_PROXY: z.enum(['0', '1']).default('0'),
  MEDIA_DIR: z.string().default('media'),
  /** The most the media store may hold, bytes; 0 for no cap (the disk's free-space floor still holds). */
  MEDIA_MAX_BYTES: z.coerce.number().int().min(0).default(0),
  /** Local store only: a write must leave this much free on the disk, bytes (default 64 MiB). */
  MEDIA_MIN_FREE_BYTES: z.coerce.number().int().min(0).default(64 * 1024 ** 2),
  /** Stills kept per clip for times no moment marks (scrubbing); the oldest go first. */
  STILLS_PER_CLIP: z.coerce.number().int().min(1).max(10_000).default(120),
  CLIENT_DIR: z.string().default('dist/client'),
  SIGN_IN_RATE_LIMIT: z.coerce.number().int().positive().default(30),
  /** Largest clip accepted, bytes (default 2 GiB). */
  UPLOAD_MAX_BYTES: z.coerce.number().int().positive().default(2 * 1024 ** 3),
  /** Largest image accepted into a story, bytes (default 10 MiB). */
  STORY_IMAGE_MAX_BYTES: z.coerce.number().int().positive().default(10 * 1024 ** 2),
  CLIPS_PER_BUILD_MAX: z.coerce.number().int().positive().default(200),
  UPLOAD_RATE_LIMIT: z.coerce.number().int().positive().default(60),
  /** An unfinished resumable upload is kept this long after it was started, seconds (default 24 h). */
  UPLOAD_EXPIRE_SECONDS: z.coerce.number().int().min(1).default(24 * 3600),
  /** How often expired resumable uploads are removed, seconds. */
  UPLOAD_SWEEP_SECONDS: z.coerce.number().int().min(1).default(15 * 60),
  /** Unfinished resumable uploads one builder may have at once. */
  UPLOADS_OPEN_PER_BUILDER: z.coerce.number().int().positive().default(10),
  /** Longest clip accepted, seconds. */
  CLIP_MAX_SECONDS: z.coerce.number().positive().default(2 * 3600),
  /** "inline": the job worker runs inside the web server; "off": run `npm run worker` separately. */
  WORKER: z.enum(['inline', 'off']).default('inline'),
  JOB_RETRY_LIMIT: z.coerce.number().int().min(0).max(20).default(3),
  JOB_EXPIRE_SECONDS: z.coerce.number().int().min(30).default(1800),
  /** A clip whose processing has shown no sign of life for this long is re-queued. */
  JOB_STALL_SECONDS: z.coerce.number().int().min(5).default(120),
  /** Prefix of job queue names, so two instances can share one database. */
  JOB_QUEUE_PREFIX: z.string().regex(/^[a-z0-9-]*$/).default(''),
  /** "local": media under MEDIA_DIR; "s3": media in a bucket (MEDIA_DIR then holds only scratch work). */
  STORAGE_DRIVER: z.enum(['local', 's3']).default('local'),
  S3_BUCKET: z.string().min(3).optional(),
  S3_REGION: z.string().min(1).default('us-east-1'),
  /** An S3-compatible service; unset for AWS itself. */
  S3_ENDPOINT: z.string().url().optional(),
  S3_FORCE_PATH_STYLE: z.enum(['0', '1']).default('0'),
  /** Both, or neither to use the SDK's default chain (AWS_* variables, instance role). */
  S3_ACCESS_KEY_ID: z.string().min(1).optional(),
  S3_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  S3_PREFIX: z.string().regex(/^[a-z0-9][a-z0-9._-]*(\/[a-z0-9][a-z0-9._-]*)*$/).optional(),
  /** A real mail server (smtp:// or smtps://, credentials in the URL). Unset: the local capture server. */
  SMTP_URL: z.string().regex(/^smtps?:\/\//, 'must start with smtp:// or smtps://').optional(),
  FAKE_SMTP_PORT: port.default(3125),
  FAKE_SMTP_API_PORT: port.default(3126),
  /** Where the local capture server is (set by tests that start their own). */
  FAKE_SMTP_URL: z.string().regex(/^smtp:\/\//).optional(),
  FAKE_SMTP_API_URL: z.string().url().optional(),
  MAIL_FROM: z.string().min(3).default('Benchproof <mail@benchproof.invalid>'),
  /** Attempts after the first for one message (with growing delays), so a mail server that is down for a while still gets it. */
  MAIL_RETRY_LIMIT: z.coerce.number().int().min(0).max(30).default(12),
  MAIL_RETRY_DELAY_SECONDS: z.coerce.number().int().min(1).max(3600).default(5),
  /**
   * Another offline recognizer instead of pocketsphinx: a command line (no shell; quotes group
   * words) with `{wav}` where the 16 kHz mono WAV goes, printing JSON words (see README).
   */
  SPEECH_COMMAND: z.string().trim().min(1).optional(),
  /** pocketsphinx's model folder (acoustic model `en-us`, `en-us.lm.bin`, `cmudict-en-us.dict`). */
  SPEECH_MODEL_DIR: z.string().min(1).default('/usr/share/pocketsphinx/model/en-us'),
  /**
   * pocketsphinx's language model: "general" (Debian's en-us model) or "trade" (ours, made from
   * invented workshop talk and spoken figures: server/features/speech/trade-lm.ts).
   */
  SPEECH_LM: z.enum(['general', 'trade']).default('general'),
  /** "off": clips are not listened to (their words stay empty, their state "unavailable"). */
  SPEECH: z.enum(['on', 'off']).default('on'),
  /** Where SPEECH_COMMAND's program is looked for when it is a bare name. */
  PATH: z.string().default('/usr/local/bin:/usr/bin:/bin'),
}).superRefine((e, ctx) => {
  if (e.NODE_ENV === 'production' && !e.SESSION_SECRET) {
    ctx.addIssue({ code: 'custom', path: ['SESSION_SECRET'], message: 'required in production: set a long random value' });
  }
  if (e.STORAGE_DRIVER === 's3' && !e.S3_BUCKET) ctx.addIssue({ code: 'custom', path: ['S3_BUCKET'], message: 'required when STORAGE_DRIVER=s3' });
  if (e.SPEECH_COMMAND !== undefined && !commandLine(e.SPEECH_COMMAND)) {
    ctx.addIssue({ code: 'custom', path: ['SPEECH_COMMAND'], message: 'a quote is not closed' });
  }
  if (Boolean(e.S3_ACCESS_KEY_ID) !== Boolean(e.S3_SECRET_ACCESS_KEY)) {
    ctx.addIssue({ code: 'custom', path: ['S3_SECRET_ACCESS_KEY'], message: 'set both S3 keys or neither' });
  }
});

export type Env = z.infer<typeof envSchema>;

export interface Config {
  env: Env['NODE_ENV'];
  host: string;
  port: number;
  publicUrl: string;
  databaseUrl: string;
  sessionSecret: string;
  /** Idle and absolute session timeouts, ms (OWASP ASVS V7.3). */
  sessionIdleMs: number;
  sessionMaxMs: number;
  github: {
    clientId: string;
    clientSecret: string;
    /** Base of the authorize and token URLs (https://github.com or the fake). */
    webBase: string;
    /** Base of the REST API (https://api.github.com or the fake). */
    apiBase: string;
    fake: boolean;
  };
  logLevel: Env['LOG_LEVEL'];
  cookieSecure: boolean | 'auto';
  trustProxy: boolean;
  mediaDir: string;
  clientDir: string;
  /** Stills kept per clip beyond the moments' own (a bounded cache, oldest evicted first). */
  stillsPerClip: number;
  signInRateLimit: number;
  uploads: {
    maxBytes: number;
    clipsPerBuild: number;
    ratePerMinute: number;
    maxSeconds: number;
    maxImageBytes: number;
    /** Resumable uploads: how long an unfinished one is kept, how often expired ones are swept (s), how many one builder may have open. */
    expireSeconds: number;
    sweepSeconds: number;
    openPerBuilder: number;
  };
  jobs: { worker: 'inline' | 'off'; retryLimit: number; expireSeconds: number; stallSeconds: number; queuePrefix: string };
  /** Holds S3 credentials when configured: never log a Config. */
  storage: StorageSettings;
  /** Holds SMTP credentials when configured: never log a Config. */
  mail: {
    transportUrl: string;
    from: string;
    /** True when mail goes to the local capture server (and the admin outbox can list it). */
    fake: boolean;
    captureApiUrl: string | null;
    fakePorts: { smtp: number; api: number };
    retryLimit: number;
    retryDelaySeconds: number;
  };
  /** Listening to clips (offline speech recognition). */
  speech: {
    enabled: boolean;
    /** SPEECH_COMMAND split into program and arguments; null for pocketsphinx. */
    command: string[] | null;
    modelDir: string;
    /** pocketsphinx's language model (SPEECH_LM). */
    lm: 'general' | 'trade';
    /** The folders a bare program name is looked up in (PATH). */
    searchPath: string;
  };
}

/**
 * A command line split into words as a shell would for the simple cases (spaces separate,
 * '…' and "…" group, no expansion); null when a quote is left open.
 */
export function commandLine(text: string): string[] | null {
  const words: string[] = [];
  let word: string | null = null;
  let quote: '"' | "'" | null = null;
  for (const ch of text) {
    if (quote) {
      if (ch === quote) quote = null;
      else word = (word ?? '') + ch;
    } else if (ch === '"' || ch === "'") {
      quote = ch;
      word ??= '';
    } else if (/\s/.test(ch)) {
      if (word !== null) words.push(word);
      word = null;
    } else {
      word = (word ?? '') + ch;
    }
  }
  if (quote) return null;
  if (word !== null) words.push(word);
  return words.length > 0 ? words : null;
}

/** Parses the environment into a Config; throws with every problem listed. */
export function loadConfig(source: NodeJS.ProcessEnv = process.env): Config {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new Error(`The environment has settings Benchproof cannot use:\n${lines.join('\n')}`);
  }
  const e = parsed.data;
  const realGithub = Boolean(e.GITHUB_CLIENT_ID && e.GITHUB_CLIENT_SECRET);
  const fakeBase = e.FAKE_GITHUB_URL ?? `http://127.0.0.1:${e.FAKE_GITHUB_PORT}`;
  return {
    env: e.NODE_ENV,
    host: e.HOST,
    port: e.PORT,
    publicUrl: (e.PUBLIC_URL ?? `http://127.0.0.1:${e.PORT}`).replace(/\/$/, ''),
    databaseUrl: e.DATABASE_URL,
    sessionSecret: e.SESSION_SECRET ?? 'benchproof-development-only-secret',
    sessionIdleMs: e.SESSION_IDLE_HOURS * 3600 * 1000,
    sessionMaxMs: e.SESSION_MAX_DAYS * 24 * 3600 * 1000,
    github: realGithub
      ? {
          clientId: e.GITHUB_CLIENT_ID!,
          clientSecret: e.GITHUB_CLIENT_SECRET!,
          webBase: 'https://github.com',
          apiBase: 'https://api.github.com',
          fake: false,
        }
      : {
          clientId: 'benchproof-local',
          clientSecret: 'benchproof-local-secret',
          webBase: fakeBase,
          apiBase: fakeBase,
          fake: true,
        },
    logLevel: e.LOG_LEVEL,
    cookieSecure: e.COOKIE_SECURE === 'auto' ? 'auto' : e.COOKIE_SECURE === '1',
    trustProxy: e.TRUST_PROXY === '1',
    mediaDir: e.MEDIA_DIR,
    clientDir: e.CLIENT_DIR,
    stillsPerClip: e.STILLS_PER_CLIP,
    signInRateLimit: e.SIGN_IN_RATE_LIMIT,
    uploads: {
      maxBytes: e.UPLOAD_MAX_BYTES,
      clipsPerBuild: e.CLIPS_PER_BUILD_MAX,
      ratePerMinute: e.UPLOAD_RATE_LIMIT,
      maxSeconds: e.CLIP_MAX_SECONDS,
      maxImageBytes: e.STORY_IMAGE_MAX_BYTES,
      expireSeconds: e.UPLOAD_EXPIRE_SECONDS,
      sweepSeconds: e.UPLOAD_SWEEP_SECONDS,
      openPerBuilder: e.UPLOADS_OPEN_PER_BUILDER,
    },
    jobs: {
      worker: e.WORKER,
      retryLimit: e.JOB_RETRY_LIMIT,
      expireSeconds: e.JOB_EXPIRE_SECONDS,
      stallSeconds: e.JOB_STALL_SECONDS,
      queuePrefix: e.JOB_QUEUE_PREFIX,
    },
    mail: {
      transportUrl: e.SMTP_URL ?? e.FAKE_SMTP_URL ?? `smtp://127.0.0.1:${e.FAKE_SMTP_PORT}`,
      from: e.MAIL_FROM,
      fake: !e.SMTP_URL,
      captureApiUrl: e.SMTP_URL ? null : (e.FAKE_SMTP_API_URL ?? `http://127.0.0.1:${e.FAKE_SMTP_API_PORT}`),
      fakePorts: { smtp: e.FAKE_SMTP_PORT, api: e.FAKE_SMTP_API_PORT },
      retryLimit: e.MAIL_RETRY_LIMIT,
      retryDelaySeconds: e.MAIL_RETRY_DELAY_SECONDS,
    },
    speech: {
      enabled: e.SPEECH === 'on',
      command: e.SPEECH_COMMAND === undefined ? null : commandLine(e.SPEECH_COMMAND),
      modelDir: e.SPEECH_MODEL_DIR,
      lm: e.SPEECH_LM,
      searchPath: e.PATH,
    },
    storage: {
      driver: e.STORAGE_DRIVER,
      mediaDir: e.MEDIA_DIR,
      maxBytes: e.MEDIA_MAX_BYTES,
      minFreeBytes: e.MEDIA_MIN_FREE_BYTES,
      s3:
        e.STORAGE_DRIVER === 's3'
          ? {
              bucket: e.S3_BUCKET!,
              region: e.S3_REGION,
              endpoint: e.S3_ENDPOINT,
              forcePathStyle: e.S3_FORCE_PATH_STYLE === '1',
              accessKeyId: e.S3_ACCESS_KEY_ID,
              secretAccessKey: e.S3_SECRET_ACCESS_KEY,
              prefix: e.S3_PREFIX,
            }
          : undefined,
    },
  };
}
