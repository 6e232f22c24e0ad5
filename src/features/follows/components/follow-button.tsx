import { lazy, Suspense, useRef, useState } from 'react';
import { useQuery } from '@tanstack/react-query';
import { useLocation } from 'react-router-dom';
import type { PublicBuilderProfile } from '@shared/public/public-build.schema';
import { ButtonLink, Button } from '@/components/ui/button';
import { authQueries } from '@/features/auth/api/auth-queries';
import { signInPath } from '@/features/auth/lib/return-to';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { useSetFollowing } from '../api/follow-mutations';

// The button is on the story page, a reader's first load: the dialog (Radix and its layers) loads
// only when someone asks to unfollow.
const UnfollowDialog = lazy(() => import('./unfollow-dialog').then((m) => ({ default: m.UnfollowDialog })));

/**
 * Follow or unfollow a builder (mail when they publish). Following is one click; unfollowing asks
 * first. Signed out, it is a way to sign in and come back here; on one's own profile there is
 * nothing to follow.
 */
export function FollowButton({ profile, size = 'md' }: { profile: Pick<PublicBuilderProfile, 'id' | 'displayName' | 'following'>; size?: 'sm' | 'md' }) {
  const me = useQuery(authQueries.me());
  const location = useLocation();
  const setFollowing = useSetFollowing();
  const { toast } = useToast();
  const [asking, setAsking] = useState(false);
  const button = useRef<HTMLButtonElement>(null);

  if (me.isPending) return null;
  if (!me.data) {
    return (
      <ButtonLink to={signInPath(location.pathname + location.search)} variant="secondary" size={size}>
        Sign in to follow
      </ButtonLink>
    );
  }
  if (me.data.id === profile.id || profile.following === null) return null;

  const following = profile.following;
  const change = (follow: boolean) =>
    setFollowing.mutate(
      { builderId: profile.id, follow },
      {
        onSuccess: (now) => {
          setAsking(false);
          toast({
            tone: 'success',
            title: now ? `You follow ${profile.displayName}` : `You no longer follow ${profile.displayName}`,
            description: now
              ? 'You will get an e-mail when they publish; change that under Follows and e-mail.'
              : 'No more e-mail when they publish. Follow them again here at any time.',
          });
        },
        onError: (error) => {
          setAsking(false);
          toast({ tone: 'error', title: 'Not changed', description: errorMessage(error) });
        },
      },
    );

  return (
    <>
      <Button
        ref={button}
        variant={following ? 'secondary' : 'primary'}
        size={size}
        aria-pressed={following}
        loading={setFollowing.isPending && !asking}
        loadingText={following ? 'Unfollowing…' : 'Following…'}
        onClick={() => (following ? setAsking(true) : change(true))}
      >
        {following ? `Following ${profile.displayName}` : `Follow ${profile.displayName}`}
      </Button>
      {asking && (
        <Suspense fallback={null}>
          <UnfollowDialog
            open
            onOpenChange={(open) => {
              if (!open && !setFollowing.isPending) setAsking(false);
            }}
            builderName={profile.displayName}
            pending={setFollowing.isPending}
            onConfirm={() => change(false)}
            returnFocus={() => button.current}
          />
        </Suspense>
      )}
    </>
  );
}
