/** Joins class names, skipping falsy entries. Tiny on purpose: no class merging. */
export function cn(...classes: Array<string | false | null | undefined>): string {
  return classes.filter(Boolean).join(' ');
}
