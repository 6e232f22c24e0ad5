import { Avatar as RadixAvatar } from 'radix-ui';
import { cn } from '@/lib/cn';

/** Up to two initials from a display name ("Ines Calloway" → "IC"). */
export function initials(name: string): string {
  const parts = name.trim().split(/\s+/).filter(Boolean);
  const letters = parts.length > 1 ? [parts[0], parts[parts.length - 1]] : parts;
  return letters.map((part) => part?.[0]?.toUpperCase() ?? '').join('') || '?';
}

/** A person's picture, falling back to their initials while loading or when it fails. Decorative: put the name beside it. */
export function Avatar({ name, src, size = 'md', className }: { name: string; src?: string | null; size?: 'sm' | 'md' | 'lg'; className?: string }) {
  const sizeClass = size === 'sm' ? 'size-6 text-2xs' : size === 'lg' ? 'size-12 text-base' : 'size-8 text-xs';
  return (
    <RadixAvatar.Root
      aria-hidden="true"
      className={cn('inline-flex shrink-0 items-center justify-center overflow-hidden rounded-full border border-line bg-paper-2 align-middle', sizeClass, className)}
    >
      {src && <RadixAvatar.Image src={src} alt="" className="size-full object-cover" />}
      <RadixAvatar.Fallback delayMs={src ? 400 : 0} className="font-sans font-semibold text-ink">
        {initials(name)}
      </RadixAvatar.Fallback>
    </RadixAvatar.Root>
  );
}
