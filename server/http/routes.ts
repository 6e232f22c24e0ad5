import type { Express, Router } from 'express';
import { isAccessCheck } from './authorize';

/** One route the API answers: method and full path. */
export interface RouteInfo {
  method: string;
  path: string;
}

interface Layer {
  route?: { path: string; methods: Record<string, boolean>; stack: { handle: unknown }[] };
  handle?: { stack?: Layer[] };
}

/** What each app mounted: one list per app, so apps made in one process (the tests make many) never share one. */
const mountedBy = new WeakMap<Express, { prefix: string; router: Router }[]>();

/**
 * Mounts a feature router and checks, at start-up, that every route in it begins with an
 * access declaration (access.public / signedIn / role). A route without one makes the server
 * refuse to start: deny by default, enforced.
 */
export function mount(app: Express, prefix: string, router: Router) {
  for (const r of routesOf(prefix, router)) {
    if (!r.declared) {
      throw new Error(`${r.method} ${r.path} has no access declaration; add access.public, access.signedIn or access.role(...)`);
    }
  }
  const mounted = mountedBy.get(app) ?? [];
  mountedBy.set(app, mounted);
  if (!mounted.some((m) => m.router === router && m.prefix === prefix)) mounted.push({ prefix, router });
  app.use(prefix, router);
}

/** Every route mounted on `app` through `mount`, for the authorization tests. */
export function listRoutes(app: Express): RouteInfo[] {
  return (mountedBy.get(app) ?? []).flatMap(({ prefix, router }) => routesOf(prefix, router).map(({ method, path }) => ({ method, path })));
}

function routesOf(prefix: string, router: Router) {
  const out: (RouteInfo & { declared: boolean })[] = [];
  for (const layer of (router as unknown as { stack: Layer[] }).stack) {
    if (!layer.route) continue;
    const first = layer.route.stack[0]?.handle;
    for (const method of Object.keys(layer.route.methods)) {
      out.push({
        method: method.toUpperCase(),
        path: (prefix.replace(/\/$/, '') + (layer.route.path === '/' ? '' : layer.route.path)) || '/',
        declared: isAccessCheck(first),
      });
    }
  }
  return out;
}
