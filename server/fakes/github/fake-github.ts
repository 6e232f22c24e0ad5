import crypto from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';

/** An account the fake provider knows. */
export interface FakeAccount {
  login: string;
  id: number;
  name: string;
  email: string | null;
  /** Shown on the fake's chooser page only. */
  note?: string;
}

export interface FakeGithubOptions {
  clientId: string;
  clientSecret: string;
  accounts: FakeAccount[];
  port?: number;
  host?: string;
}

/**
 * A local stand-in for GitHub's OAuth web flow and the two REST endpoints sign-in uses, with
 * the request and response shapes GitHub documents: GET /login/oauth/authorize (honours
 * `login`), POST /login/oauth/access_token, GET /user, GET /user/emails. Nothing leaves the
 * machine. Codes are single-use and live ten minutes, as GitHub's do.
 */
export function createFakeGithub(opts: FakeGithubOptions) {
  const accounts = new Map(opts.accounts.map((a) => [a.login.toLowerCase(), a]));
  const codes = new Map<string, { login: string; redirectUri: string; expires: number }>();
  const tokens = new Map<string, string>();
  const app = express();
  app.disable('x-powered-by');
  app.use(express.urlencoded({ extended: false }));
  app.use(express.json());

  app.get('/login/oauth/authorize', (req, res) => {
    const q = req.query as Record<string, string | undefined>;
    if (q.client_id !== opts.clientId || !q.redirect_uri) {
      res.status(400).type('text/plain').send('The application asking to sign you in is not registered with this provider.');
      return;
    }
    const redirect = new URL(q.redirect_uri);
    if (q.state) redirect.searchParams.set('state', q.state);
    if (q.deny === '1') {
      redirect.searchParams.set('error', 'access_denied');
      redirect.searchParams.set('error_description', 'The user has denied your application access.');
      res.redirect(redirect.toString());
      return;
    }
    const account = q.login ? accounts.get(q.login.toLowerCase()) : undefined;
    if (account) {
      const code = crypto.randomBytes(16).toString('hex');
      codes.set(code, { login: account.login, redirectUri: q.redirect_uri, expires: Date.now() + 600_000 });
      redirect.searchParams.set('code', code);
      res.redirect(redirect.toString());
      return;
    }
    res.type('html').send(chooserPage(req.originalUrl, [...accounts.values()]));
  });

  app.post('/login/oauth/access_token', (req, res) => {
    const b = req.body as Record<string, string | undefined>;
    const wantsJson = (req.get('accept') ?? '').includes('json');
    const send = (payload: Record<string, string>) =>
      wantsJson ? res.json(payload) : res.type('application/x-www-form-urlencoded').send(new URLSearchParams(payload).toString());
    if (b.client_id !== opts.clientId || b.client_secret !== opts.clientSecret) {
      send({ error: 'incorrect_client_credentials', error_description: 'The client_id and/or client_secret passed are incorrect.' });
      return;
    }
    const grant = b.code ? codes.get(b.code) : undefined;
    if (b.code) codes.delete(b.code);
    if (!grant || grant.expires < Date.now() || (b.redirect_uri && b.redirect_uri !== grant.redirectUri)) {
      send({ error: 'bad_verification_code', error_description: 'The code passed is incorrect or expired.' });
      return;
    }
    const token = `gho_fake_${crypto.randomBytes(18).toString('hex')}`;
    tokens.set(token, grant.login);
    send({ access_token: token, token_type: 'bearer', scope: 'user:email' });
  });

  const bearer = (req: express.Request) => {
    const m = /^(?:token|bearer)\s+(\S+)$/i.exec(req.get('authorization') ?? '');
    const login = m ? tokens.get(m[1]!) : undefined;
    return login ? accounts.get(login.toLowerCase()) : undefined;
  };
  const requiresAuth = (res: express.Response) =>
    res.status(401).json({ message: 'Requires authentication', documentation_url: 'https://docs.github.com/rest' });

  app.get('/user', (req, res) => {
    const a = bearer(req);
    if (!a) return requiresAuth(res);
    res.json({
      login: a.login,
      id: a.id,
      node_id: Buffer.from(`User${a.id}`).toString('base64'),
      avatar_url: null,
      html_url: `${baseUrl()}/${a.login}`,
      type: 'User',
      name: a.name,
      company: null,
      blog: '',
      location: null,
      email: a.email,
      bio: null,
      created_at: '2026-01-01T00:00:00Z',
      updated_at: '2026-01-01T00:00:00Z',
    });
  });

  app.get('/user/emails', (req, res) => {
    const a = bearer(req);
    if (!a) return requiresAuth(res);
    res.json(a.email ? [{ email: a.email, primary: true, verified: true, visibility: 'public' }] : []);
  });

  const server = http.createServer(app);
  let address: AddressInfo | null = null;
  const baseUrl = () => `http://${opts.host ?? '127.0.0.1'}:${address?.port ?? opts.port ?? 0}`;

  return {
    /** Starts listening; resolves with the base URL. */
    listen: () =>
      new Promise<string>((resolve, reject) => {
        server.once('error', reject);
        server.listen(opts.port ?? 0, opts.host ?? '127.0.0.1', () => {
          address = server.address() as AddressInfo;
          resolve(baseUrl());
        });
      }),
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
    url: baseUrl,
    /** Adds an account at run time (tests use it for fresh, never-seen people). */
    addAccount(a: FakeAccount) {
      accounts.set(a.login.toLowerCase(), a);
    },
  };
}

const esc = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

function chooserPage(originalUrl: string, accounts: FakeAccount[]) {
  const link = (extra: Record<string, string>) => {
    const u = new URL(originalUrl, 'http://fake.invalid');
    for (const [k, v] of Object.entries(extra)) u.searchParams.set(k, v);
    return esc(u.pathname + u.search);
  };
  const rows = accounts
    .map(
      (a) => `<li><a href="${link({ login: a.login })}"><strong>${esc(a.name)}</strong>
        <span class="login">${esc(a.login)}</span>${a.note ? `<span class="note">${esc(a.note)}</span>` : ''}</a></li>`,
    )
    .join('\n');
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Local sign-in provider (development fake)</title>
<style>
  body { font: 16px/1.5 system-ui, sans-serif; margin: 0; background: #f1efe9; color: #23262b; }
  main { max-width: 34rem; margin: 3rem auto; padding: 0 1rem; }
  .warn { border-left: 4px solid #23262b; background: #fff; padding: .75rem 1rem; }
  ul { list-style: none; padding: 0; }
  li a { display: block; padding: .75rem 1rem; margin: .5rem 0; background: #fff; border: 1px solid #c9c5bb;
         border-radius: 6px; color: inherit; text-decoration: none; }
  li a:hover, li a:focus { outline: 3px solid #1f4fb8; outline-offset: 1px; }
  .login { font-family: ui-monospace, monospace; margin-left: .5rem; color: #555; }
  .note { display: block; font-size: .875rem; color: #555; }
</style></head>
<body><main>
  <h1>Choose a demo account</h1>
  <p class="warn">This is the local stand-in for GitHub that Benchproof runs in development and tests.
  No password is asked and nothing leaves this machine. The accounts are invented.</p>
  <ul>${rows}</ul>
  <p><a href="${link({ deny: '1' })}">Cancel and go back without signing in</a></p>
</main></body></html>`;
}
