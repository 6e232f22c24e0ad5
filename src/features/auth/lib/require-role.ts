import { data, redirect } from 'react-router-dom';
import type { Role, User } from '@shared/users/user.schema';
import { queryClient } from '@/lib/query-client';
import { authQueries } from '../api/auth-queries';
import { areaAccess, type Area } from './access';
import { signInPath } from './return-to';

/** What a 403 thrown by `requireArea` carries, for the route error boundary. */
export interface ForbiddenData {
  kind: 'forbidden';
  area: Area;
  allowedRoles: readonly Role[];
  role: Role;
}

/**
 * Loader guard. Signed out: redirect to sign-in with a way back. Wrong role:
 * throw a 403 that the route error boundary shows as a "not for your role"
 * state. Otherwise resolve to the signed-in user.
 */
export async function requireArea(area: Area, request: Request): Promise<User> {
  const user = await queryClient.ensureQueryData(authQueries.me());
  if (!user) {
    const url = new URL(request.url);
    throw redirect(signInPath(url.pathname + url.search));
  }
  const allowedRoles = areaAccess[area] as readonly Role[];
  if (!allowedRoles.includes(user.role)) {
    const body: ForbiddenData = { kind: 'forbidden', area, allowedRoles, role: user.role };
    throw data(body, { status: 403 });
  }
  return user;
}

/** Reads the body `requireArea` threw, if that is what this is. */
export function readForbiddenData(value: unknown): ForbiddenData | null {
  if (typeof value === 'object' && value !== null && (value as { kind?: unknown }).kind === 'forbidden') {
    return value as ForbiddenData;
  }
  return null;
}
