import { createBrowserRouter, matchPath, type LoaderFunctionArgs } from 'react-router-dom';
import { authQueries } from '@/features/auth/api/auth-queries';
import { queryClient } from '@/lib/query-client';
import { AppLayout } from './layout/app-layout';
import { HydrateFallback } from './routes/hydrate-fallback';
import { NotFoundPage } from './routes/not-found-page';
import { RootError, RouteError } from './routes/route-error';

/**
 * The shell needs to know who is signed in before it draws the navigation.
 * prefetch (not ensure): if /api/me fails, the header shows its own retry
 * rather than the whole app showing an error page.
 */
async function rootLoader({ request }: LoaderFunctionArgs) {
  warmPublicStory(new URL(request.url).pathname);
  await queryClient.prefetchQuery(authQueries.me());
  return null;
}

/**
 * A reader's first load of a story: its data is asked for now, while the page's own code is still
 * on its way, rather than after it. The page's loader then finds the request in flight (the query
 * client shares it) and still decides what a missing story shows. Fire and forget: an error here
 * is the page loader's to report.
 */
function warmPublicStory(pathname: string) {
  const storyId = Number(matchPath('/stories/:storyId/*', pathname)?.params.storyId);
  if (!Number.isSafeInteger(storyId) || storyId <= 0 || pathname.endsWith('/edit')) return;
  void import('@/features/public/api/public-queries').then(({ publicQueries }) => queryClient.prefetchQuery(publicQueries.story(storyId)));
}

/**
 * Every page is a lazy route module exporting `Component` and, when it needs
 * data or a guard, `loader`. Role-gated pages call `requireArea` in their loader.
 */
export const router = createBrowserRouter([
  {
    id: 'root',
    path: '/',
    Component: AppLayout,
    loader: rootLoader,
    HydrateFallback,
    errorElement: <RootError />,
    children: [
      {
        // Pathless: errors below render inside the shell, header and footer intact.
        errorElement: <RouteError />,
        children: [
          { index: true, lazy: () => import('@/features/stories/routes/home-page') },
          { path: 'sign-in', lazy: () => import('@/features/auth/routes/sign-in-page') },
          { path: 'calculator', lazy: () => import('@/features/calc/routes/calculator-page') },
          { path: 'builds', lazy: () => import('@/features/builds/routes/builds-page') },
          { path: 'builds/new', lazy: () => import('@/features/builds/routes/new-build-page') },
          { path: 'builds/:buildId', lazy: () => import('@/features/builds/routes/build-workspace-page') },
          { path: 'builds/:buildId/stories', lazy: () => import('@/features/stories/routes/build-stories-page') },
          { path: 'stories/:storyId/edit', lazy: () => import('@/features/stories/routes/story-editor-page') },
          { path: 'instruments', lazy: () => import('@/features/instruments/routes/instruments-page') },
          { path: 'specs', lazy: () => import('@/features/specs/routes/specs-page') },
          { path: 'specs/:specId', lazy: () => import('@/features/specs/routes/spec-page') },
          { path: 'review', lazy: () => import('@/features/review/routes/review-page') },
          { path: 'review/stories/:storyId', lazy: () => import('@/features/review/routes/review-story-page') },
          { path: 'admin/users', lazy: () => import('@/features/admin/routes/users-page') },
          { path: 'admin/outbox', lazy: () => import('@/features/outbox/routes/outbox-page') },
          { path: 'unsubscribe', lazy: () => import('@/features/unsubscribe/routes/unsubscribe-page') },
          // A claim's panel is a child address of its story, so opening one keeps the page (and the reader's place).
          {
            path: 'stories/:storyId',
            lazy: () => import('@/features/public/routes/story-page'),
            children: [{ path: 'claims/:claimKey' }],
          },
          { path: 'public/builds/:buildId', lazy: () => import('@/features/public/routes/build-page') },
          { path: 'builders/:login', lazy: () => import('@/features/public/routes/builder-page') },
          { path: 'verify/parts/:partId', lazy: () => import('@/features/public/routes/verify-page') },
          { path: 'account/follows', lazy: () => import('@/features/follows/routes/account-follows-page') },
          // Not lazy: the error boundary shows the same page for loader 404s.
          { path: '*', Component: NotFoundPage },
        ],
      },
    ],
  },
]);
