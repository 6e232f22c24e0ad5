import { useQuery } from '@tanstack/react-query';
import { useLocation } from 'react-router-dom';
import type { PublicBuilderProfile } from '@shared/public/public-build.schema';
import { ButtonLink, Button } from '@/components/ui/button';
import { authQueries } from '@/features/auth/api/auth-queries';
import { signInPath } from '@/features/auth/lib/return-to';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { useSetFollowing } from '../api/follow-mutations';

/**
 * Follow or unfollow a builder (mail when they publish). Signed out, it is a way to sign in and
 * come back here; on one's own profile there is nothing to follow.
 */
export function FollowButton({ profile, size = 'md' }: { profile: Pick<PublicBuilderProfile, 'id' | 'displayName' | 'following'>; size?: 'sm' | 'md' }) {
  const me = useQuery(authQueries.me());
  const location = useLocation();
  const setFollowing = useSetFollowing();
  const { toast } = useToast();

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
  return (
    <Button
      variant={following ? 'secondary' : 'primary'}
      size={size}
      aria-pressed={following}
      loading={setFollowing.isPending}
      loadingText={following ? 'Unfollowing…' : 'Following…'}
      onClick={() =>
        setFollowing.mutate(
          { builderId: profile.id, follow: !following },
          {
            onSuccess: (now) =>
              toast({
                tone: 'success',
                title: now ? `You follow ${profile.displayName}` : `You no longer follow ${profile.displayName}`,
                description: now ? 'You will get an e-mail when they publish; change that under Follows and e-mail.' : undefined,
              }),
            onError: (error) => toast({ tone: 'error', title: 'Not changed', description: errorMessage(error) }),
          },
        )
      }
    >
      {following ? `Following ${profile.displayName}` : `Follow ${profile.displayName}`}
    </Button>
  );
}
