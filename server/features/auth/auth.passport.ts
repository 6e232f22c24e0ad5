import { Passport } from 'passport';
import { Strategy as GitHubStrategy, type Profile } from 'passport-github2';
import type { Config } from '../../config';
import { User } from '../users/user.model';
import { upsertFromProvider } from '../users/users.service';

/**
 * GitHub's strategy, plus the documented `login` authorize parameter ("suggests a specific
 * account to use for signing in"), which the local fake uses to approve a demo account at once.
 */
class GitHubWithLogin extends GitHubStrategy {
  authorizationParams(options: { login?: unknown }): Record<string, string> {
    return typeof options.login === 'string' && options.login ? { login: options.login } : {};
  }
}

/** A Passport instance of our own (not the global one) so every app built in tests is separate. */
export function createPassport(config: Config) {
  const passport = new Passport();
  passport.use(
    new GitHubWithLogin(
      {
        clientID: config.github.clientId,
        clientSecret: config.github.clientSecret,
        callbackURL: `${config.publicUrl}/auth/github/callback`,
        authorizationURL: `${config.github.webBase}/login/oauth/authorize`,
        tokenURL: `${config.github.webBase}/login/oauth/access_token`,
        userProfileURL: `${config.github.apiBase}/user`,
        userEmailURL: `${config.github.apiBase}/user/emails`,
        scope: ['user:email'],
        // passport-oauth2 keeps and checks the OAuth state in the session; the types lag behind.
        state: true as unknown as string,
        userAgent: 'benchproof',
      },
      (_accessToken: string, _refreshToken: string, profile: Profile, done: (err: unknown, user?: User) => void) => {
        const json = (profile as Profile & { _json?: { avatar_url?: string; name?: string | null } })._json ?? {};
        upsertFromProvider({
          githubId: String(profile.id),
          login: profile.username ?? String(profile.id),
          displayName: profile.displayName || json.name || profile.username || '',
          email: profile.emails?.[0]?.value ?? null,
          avatarUrl: json.avatar_url ?? profile.photos?.[0]?.value ?? null,
        }, { demoAccounts: config.github.fake }).then((user) => done(null, user), done);
      },
    ),
  );
  passport.serializeUser((user, done) => done(null, (user as User).id));
  passport.deserializeUser((id: number, done) => {
    // A deleted account simply ends the session (false), it is not an error.
    User.findByPk(id).then((user) => done(null, user ?? false), done);
  });
  return passport;
}
