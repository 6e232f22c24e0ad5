import { useId, useRef, useState } from 'react';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import { Link, type LoaderFunctionArgs, redirect } from 'react-router-dom';
import type { Follow, Preferences, PreferencesPatch } from '@shared/public/follows.schema';
import { Button, ButtonLink } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { PageHeader } from '@/components/ui/page-header';
import { useToast } from '@/components/ui/toast';
import { authQueries } from '@/features/auth/api/auth-queries';
import { signInPath } from '@/features/auth/lib/return-to';
import { errorMessage } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { instantDay } from '@/lib/dates';
import { useSetFollowEmail, useSetFollowing, useUpdatePreferences } from '../api/follow-mutations';
import { followQueries } from '../api/follow-queries';
import { UnfollowDialog } from '../components/unfollow-dialog';

/** Any signed-in account may follow builders; signed out, sign in first and come back. */
export async function loader({ request }: LoaderFunctionArgs) {
  const user = await queryClient.ensureQueryData(authQueries.me());
  if (!user) {
    const url = new URL(request.url);
    throw redirect(signInPath(url.pathname + url.search));
  }
  void queryClient.prefetchInfiniteQuery(followQueries.list());
  void queryClient.prefetchQuery(followQueries.preferences());
  return null;
}

/** The builders one follows, mail per builder, the weekly digest, and unfollowing. */
export function Component() {
  return (
    <>
      <PageHeader
        title="Follows, e-mail and units"
        description="Builders you follow, whether each one’s new stories reach you by e-mail, the weekly digest, and the units new figures start in."
      />
      <div className="flex max-w-3xl flex-col gap-10">
        <MailAddress />
        <DigestSetting />
        <UnitsSetting />
        <FollowList />
      </div>
    </>
  );
}

/**
 * Where the mail goes: the address of the GitHub account one signs in with (`/api/me`), taken
 * again at every sign-in. The mail itself is chosen on this page.
 */
function MailAddress() {
  const me = useQuery(authQueries.me());
  const id = useId();
  const email = me.data?.email ?? null;
  return (
    <section aria-labelledby={`${id}-h`} className="rounded-lg border border-rule p-4" data-mail-address="">
      <h2 id={`${id}-h`} className="text-md font-semibold">
        Where your e-mail goes
      </h2>
      {me.isPending ? (
        <LoadingState label="Loading your account…" />
      ) : email ? (
        <>
          <p className="mt-1 text-sm">
            Mail from Benchproof goes to <strong className="font-semibold break-all">{email}</strong>.
          </p>
          <p className="mt-1 text-xs text-ink-muted">
            It is the address of the GitHub account you sign in with, read again each time you sign in: to use another, change it on GitHub
            and sign in again. Which mail you get is chosen below: the weekly digest, and for each builder whether their new stories reach
            you.
          </p>
        </>
      ) : (
        <p className="mt-1 text-sm">
          Your account has no e-mail address, so no mail can reach you. Add one to the GitHub account you sign in with, make it visible to
          apps, then sign in again.
        </p>
      )}
    </section>
  );
}

function DigestSetting() {
  const preferences = useQuery(followQueries.preferences());
  const update = useUpdatePreferences();
  const { toast } = useToast();
  const id = useId();
  return (
    <section aria-labelledby={`${id}-h`} className="rounded-lg border border-rule p-4">
      <h2 id={`${id}-h`} className="text-md font-semibold">
        Weekly digest
      </h2>
      {preferences.isPending ? (
        <LoadingState label="Loading your preferences…" />
      ) : preferences.isError ? (
        <ErrorState title="Your preferences could not be loaded" error={preferences.error} onRetry={() => void preferences.refetch()} retrying={preferences.isRefetching} />
      ) : (
        <>
          <label htmlFor={`${id}-digest`} className="mt-2 flex items-start gap-2 text-sm">
            <input
              id={`${id}-digest`}
              type="checkbox"
              className="mt-0.5 size-4 accent-ink"
              checked={preferences.data.weeklyDigest}
              disabled={update.isPending}
              onChange={(e) =>
                update.mutate(
                  { weeklyDigest: e.target.checked },
                  {
                    onSuccess: (p) => toast({ tone: 'success', title: p.weeklyDigest ? 'Weekly digest on' : 'Weekly digest off' }),
                    onError: (error) => toast({ tone: 'error', title: 'Not saved', description: errorMessage(error) }),
                  },
                )
              }
            />
            <span>
              Send me one e-mail a week with what the builders I follow published
              <span className="block text-xs text-ink-muted">Separate from the per-builder e-mails below; you can have either, both or none.</span>
            </span>
          </label>
          <p className="mt-3 text-xs text-ink-muted">
            Units picked with a story’s switch:{' '}
            <span className="font-medium text-ink">
              {preferences.data.units === 'imperial'
                ? 'imperial (in, thou)'
                : preferences.data.units === 'metric'
                  ? 'metric (mm, µm)'
                  : preferences.data.unitSystem
                    ? 'none yet, so your default units below'
                    : 'as each builder entered them'}
            </span>
            . Change it with the units switch on any story.
          </p>
        </>
      )}
    </section>
  );
}

type UnitChoiceField = 'unitSystem' | 'temperatureScale';

const unitGroups: {
  field: UnitChoiceField;
  legend: string;
  options: { value: NonNullable<Preferences[UnitChoiceField]>; label: string }[];
  unset: string;
}[] = [
  {
    field: 'unitSystem',
    legend: 'Lengths, torques and pressures',
    options: [
      { value: 'imperial', label: 'Inches and thou' },
      { value: 'metric', label: 'Millimetres and micrometres' },
    ],
    unset: 'Not chosen yet: new figures start in inches.',
  },
  {
    field: 'temperatureScale',
    legend: 'Temperatures',
    options: [
      { value: 'degC', label: '°C' },
      { value: 'degF', label: '°F' },
    ],
    unset: 'Not chosen yet: °F with inches, °C with millimetres.',
  },
];

/** Default units: where the calculator, a new instrument and the stories you read start. */
function UnitsSetting() {
  const preferences = useQuery(followQueries.preferences());
  const update = useUpdatePreferences();
  const { toast } = useToast();
  const id = useId();
  const save = (patch: PreferencesPatch) =>
    update.mutate(patch, {
      onSuccess: () => toast({ tone: 'success', title: 'Units saved' }),
      onError: (error) => toast({ tone: 'error', title: 'Not saved', description: errorMessage(error) }),
    });
  return (
    <section aria-labelledby={`${id}-h`} className="rounded-lg border border-rule p-4">
      <h2 id={`${id}-h`} className="text-md font-semibold">
        Units
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        New readings in the calculator, a new instrument, and the stories you read (until you pick with a story’s units switch) start in
        these. Any figure can still be entered or shown in another unit.
      </p>
      {preferences.isPending ? (
        <LoadingState label="Loading your preferences…" />
      ) : preferences.isError ? (
        <ErrorState title="Your preferences could not be loaded" error={preferences.error} onRetry={() => void preferences.refetch()} retrying={preferences.isRefetching} />
      ) : (
        <div className="mt-3 grid gap-4 sm:grid-cols-2">
          {unitGroups.map((group) => {
            const current = preferences.data[group.field];
            return (
              <fieldset key={group.field} data-units-setting={group.field} aria-describedby={current === null ? `${id}-${group.field}-unset` : undefined}>
                <legend className="text-sm font-medium">{group.legend}</legend>
                <div className="mt-1 flex flex-col gap-1">
                  {group.options.map((option) => (
                    <label key={option.value} className="flex items-center gap-2 text-sm">
                      <input
                        type="radio"
                        name={`${id}-${group.field}`}
                        value={option.value}
                        className="size-4 accent-ink"
                        checked={current === option.value}
                        disabled={update.isPending}
                        onChange={() => save({ [group.field]: option.value })}
                      />
                      {option.label}
                    </label>
                  ))}
                </div>
                {current === null && (
                  <p id={`${id}-${group.field}-unset`} className="mt-1 text-xs text-ink-muted">
                    {group.unset}
                  </p>
                )}
              </fieldset>
            );
          })}
        </div>
      )}
    </section>
  );
}

function FollowList() {
  const follows = useInfiniteQuery(followQueries.list());
  const items = follows.data?.pages.flatMap((p) => p.items) ?? [];
  // The mutation lives here, not in the row: the row leaves the list when it succeeds, and the toast must still show.
  const following = useSetFollowing();
  const { toast } = useToast();
  const [asking, setAsking] = useState<Follow['builder'] | null>(null);
  const opener = useRef<HTMLButtonElement | null>(null);
  const heading = useRef<HTMLHeadingElement>(null);

  const unfollow = (builder: Follow['builder']) =>
    following.mutate(
      { builderId: builder.id, follow: false },
      {
        onSuccess: () => {
          setAsking(null);
          toast({
            tone: 'success',
            title: `You no longer follow ${builder.displayName}`,
            description: 'No more e-mail when they publish. Follow them again from their profile.',
          });
        },
        onError: (error) => {
          setAsking(null);
          toast({ tone: 'error', title: 'Still following', description: `${builder.displayName} was not unfollowed: ${errorMessage(error)}` });
        },
      },
    );

  return (
    <section aria-labelledby="follows-heading" className="flex flex-col gap-3">
      <h2 id="follows-heading" ref={heading} tabIndex={-1} className="text-md font-semibold outline-none">
        Builders you follow
      </h2>
      {follows.isPending ? (
        <LoadingState label="Loading the builders you follow…" />
      ) : follows.isError ? (
        <ErrorState title="Your follows could not be loaded" error={follows.error} onRetry={() => void follows.refetch()} retrying={follows.isRefetching} />
      ) : items.length === 0 ? (
        <EmptyState title="You follow no one yet" action={<ButtonLink to="/">Browse stories</ButtonLink>}>
          Open a story and follow its builder from their name, or from their profile. You will get an e-mail when they publish.
        </EmptyState>
      ) : (
        <>
          <ul className="flex flex-col divide-y divide-rule rounded-lg border border-rule">
            {items.map((follow) => (
              <FollowRow
                key={follow.builder.id}
                follow={follow}
                onUnfollow={(button) => {
                  opener.current = button;
                  setAsking(follow.builder);
                }}
              />
            ))}
          </ul>
          <LoadMore query={follows} shown={items.length} what="follows" />
        </>
      )}
      <UnfollowDialog
        open={asking !== null}
        onOpenChange={(open) => {
          if (!open && !following.isPending) setAsking(null);
        }}
        builderName={asking?.displayName ?? ''}
        pending={following.isPending}
        onConfirm={() => asking && unfollow(asking)}
        // Back to the row's button when it is still there (cancelled), else to the list's heading.
        returnFocus={() => (opener.current?.isConnected ? opener.current : heading.current)}
      />
    </section>
  );
}

function FollowRow({ follow, onUnfollow }: { follow: Follow; onUnfollow: (button: HTMLButtonElement) => void }) {
  const email = useSetFollowEmail();
  const { toast } = useToast();
  const id = useId();
  const { builder } = follow;
  return (
    <li className="flex flex-wrap items-center justify-between gap-3 px-4 py-3" data-follow={builder.login}>
      <div className="min-w-0">
        <Link to={`/builders/${encodeURIComponent(builder.login)}`} className="font-semibold">
          {builder.displayName}
        </Link>
        <p className="text-xs text-ink-muted">
          {builder.shop ? `${builder.shop} · ` : ''}following since {instantDay(follow.since)}
        </p>
      </div>
      <div className="flex flex-wrap items-center gap-4">
        <label htmlFor={`${id}-mail`} className="flex items-center gap-2 text-sm">
          <input
            id={`${id}-mail`}
            type="checkbox"
            className="size-4 accent-ink"
            checked={follow.emailOnPublish}
            disabled={email.isPending}
            onChange={(e) =>
              email.mutate(
                { builderId: builder.id, emailOnPublish: e.target.checked },
                {
                  onSuccess: (saved) =>
                    toast({
                      tone: 'success',
                      title: saved.follow.emailOnPublish ? `E-mail on for ${builder.displayName}` : `E-mail off for ${builder.displayName}`,
                    }),
                  onError: (error) => toast({ tone: 'error', title: 'Not saved', description: errorMessage(error) }),
                },
              )
            }
          />
          E-mail when {builder.displayName} publishes
        </label>
        <Button size="sm" variant="secondary" onClick={(event) => onUnfollow(event.currentTarget)}>
          Unfollow<span className="sr-only"> {builder.displayName}</span>
        </Button>
      </div>
    </li>
  );
}
