import { useQuery } from '@tanstack/react-query';
import { authQueries } from '@/features/auth/api/auth-queries';
import { ButtonLink } from '@/components/ui/button';
import { EmptyState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';

/** Home: what Benchproof is for, and the (for now empty) list of published stories. */
export function Component() {
  const me = useQuery(authQueries.me());
  const signedOut = me.isSuccess && me.data === null;

  return (
    <>
      <PageHeader
        title="Build stories you can check"
        documentTitle="Stories"
        description={
          <p className="font-serif text-story">
            Builders film their bench work and log each reading at the moment it was taken. Every clearance in a
            story links back to its reading, the clip it came from and the spec it was judged against, so you can
            see the blade in the gap, not just the number.
          </p>
        }
      />

      <ul className="mb-10 grid max-w-page gap-4 text-sm sm:grid-cols-3">
        <HowItWorks title="Readings with their proof">
          Feeler blade, micrometer or bore gauge: the value, the instrument and the moment in the clip.
        </HowItWorks>
        <HowItWorks title="Clearances with their doubt">
          Each clearance carries its uncertainty and a verdict against a cited spec: within spec, out of spec or too
          close to call.
        </HowItWorks>
        <HowItWorks title="Checked by people who know">
          Moderators compare readings with the footage before a story is published.
        </HowItWorks>
      </ul>

      <section aria-labelledby="stories-heading">
        <h2 id="stories-heading" className="mb-3 text-lg font-semibold">
          Published stories
        </h2>
        <EmptyState
          title="No stories published yet"
          action={
            <>
              <ButtonLink to="/calculator" variant="secondary">
                Open the clearance calculator
              </ButtonLink>
              {signedOut && (
                <ButtonLink to="/sign-in" variant="primary">
                  Sign in to follow builders
                </ButtonLink>
              )}
            </>
          }
        >
          Stories appear here once a builder publishes one and a moderator has checked its readings. Meanwhile you can
          work a clearance through the calculator{signedOut ? ', or sign in so you are ready to follow builders' : ''}.
        </EmptyState>
      </section>
    </>
  );
}

function HowItWorks({ title, children }: { title: string; children: string }) {
  return (
    <li className="border-t-2 border-ink pt-2">
      <h3 className="font-semibold">{title}</h3>
      <p className="mt-1 text-ink-muted">{children}</p>
    </li>
  );
}
