import { useQuery } from '@tanstack/react-query';
import { Link, useSearchParams } from 'react-router-dom';
import { authQueries } from '../api/auth-queries';
import { safeReturnTo } from '../lib/return-to';
import { buttonClassName } from '@/components/ui/button';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';

/** Messages for the `?error=` codes the GitHub sign-in callback sends back. */
const signInErrors: Record<string, { title: string; whatToDo: string }> = {
  access_denied: {
    title: 'Sign-in was cancelled',
    whatToDo: 'GitHub did not pass your account to Benchproof, so nothing changed. Sign in again when you are ready.',
  },
  cancelled: {
    title: 'Sign-in was cancelled',
    whatToDo: 'Nothing changed. Sign in again when you are ready.',
  },
  state_mismatch: {
    title: 'The sign-in link had expired',
    whatToDo: 'This happens when sign-in is started in one tab and finished in another, or left open too long. Start again from this page.',
  },
  github_unavailable: {
    title: 'GitHub could not be reached',
    whatToDo: 'Wait a minute, then try again.',
  },
};

const fallbackError = {
  title: 'Sign-in did not complete',
  whatToDo: 'Try again. If it keeps failing, tell the site admin the code below.',
};

export function Component() {
  const [params] = useSearchParams();
  const returnTo = safeReturnTo(params.get('returnTo'));
  const errorCode = params.get('error');
  const me = useQuery(authQueries.me());

  const githubHref = returnTo ? `/auth/github?${new URLSearchParams({ returnTo })}` : '/auth/github';

  return (
    <div className="max-w-prose">
      <PageHeader
        title="Sign in"
        description="Benchproof uses your GitHub account to know who you are. You do not need a separate password."
      />

      {errorCode && <SignInError code={errorCode} />}

      {me.isPending ? (
        <LoadingState label="Checking whether you are signed in…" />
      ) : me.data ? (
        <div className="rounded-lg border border-rule px-5 py-6">
          <p className="text-base">
            You are signed in as <strong className="font-semibold">{me.data.displayName}</strong>{' '}
            <span className="figures text-sm text-ink-muted">@{me.data.login}</span>.
          </p>
          <Link to={returnTo ?? '/'} className={buttonClassName({ variant: 'primary', className: 'mt-4' })}>
            {returnTo ? 'Continue where you were' : 'Go to stories'}
          </Link>
        </div>
      ) : (
        <div className="rounded-lg border border-rule px-5 py-6">
          <h2 className="text-md font-semibold">Sign in with GitHub</h2>
          <ul className="mt-2 list-disc space-y-1 pl-5 text-sm text-ink-muted">
            <li>GitHub asks you to allow Benchproof to read your public profile and e-mail address.</li>
            <li>Your GitHub name and picture become your Benchproof profile.</li>
            <li>New accounts start as followers. Builders and moderators are set up by the site admin.</li>
          </ul>
          {/* A full page navigation: the server redirects to GitHub and back. */}
          <a href={githubHref} className={buttonClassName({ variant: 'primary', size: 'lg', className: 'mt-5' })}>
            <GitHubGlyph />
            Continue with GitHub
          </a>
          {returnTo && (
            <p className="mt-3 text-xs text-ink-muted">
              Afterwards you return to <code className="figures break-all">{returnTo}</code>.
            </p>
          )}
        </div>
      )}
    </div>
  );
}

function SignInError({ code }: { code: string }) {
  const known = signInErrors[code];
  // Only echo codes that look like codes; the URL is anyone's to write.
  const safeCode = /^[a-z0-9_-]{1,40}$/i.test(code) ? code : null;
  const message = known ?? fallbackError;
  return (
    <ErrorState
      className="mb-6"
      title={message.title}
      whatToDo={
        <>
          {message.whatToDo}
          {!known && safeCode && (
            <span className="figures mt-2 block text-xs">code: {safeCode}</span>
          )}
        </>
      }
    />
  );
}

function GitHubGlyph() {
  // A generic "account" glyph rather than GitHub's logo.
  return (
    <svg viewBox="0 0 16 16" className="size-4" aria-hidden="true">
      <circle cx="8" cy="5.5" r="2.75" fill="none" stroke="currentColor" strokeWidth="1.5" />
      <path d="M2.75 14c.6-2.9 2.7-4.5 5.25-4.5s4.65 1.6 5.25 4.5" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
    </svg>
  );
}
