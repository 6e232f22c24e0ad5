/**
 * A same-site path to come back to after sign-in, or null. Only plain paths
 * are accepted ("/admin/users?role=admin"), never another origin ("//evil",
 * "https://…"), so the parameter cannot be used to bounce people elsewhere.
 */
export function safeReturnTo(value: string | null | undefined): string | null {
  if (!value || !value.startsWith('/') || value.startsWith('//') || value.startsWith('/\\')) return null;
  if (value.startsWith('/sign-in') || value.startsWith('/auth/')) return null;
  return value;
}

/** `/sign-in`, carrying where to come back to. */
export function signInPath(returnTo: string | null | undefined): string {
  const safe = safeReturnTo(returnTo);
  return safe && safe !== '/' ? `/sign-in?${new URLSearchParams({ returnTo: safe })}` : '/sign-in';
}
