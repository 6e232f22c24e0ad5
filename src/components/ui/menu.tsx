import type { ComponentProps } from 'react';
import { DropdownMenu } from 'radix-ui';
import { cn } from '@/lib/cn';

/** Root of a menu. */
export const Menu = DropdownMenu.Root;
/** Wrap the opening button with `asChild`. */
export const MenuTrigger = DropdownMenu.Trigger;

/** The menu's popup; arrow keys move, typing jumps, Escape closes. */
export function MenuContent({
  className,
  align = 'end',
  sideOffset = 6,
  ...props
}: ComponentProps<typeof DropdownMenu.Content>) {
  return (
    <DropdownMenu.Portal>
      <DropdownMenu.Content
        align={align}
        sideOffset={sideOffset}
        className={cn('z-50 min-w-52 rounded-md border border-line bg-paper p-1 shadow-raised', className)}
        {...props}
      />
    </DropdownMenu.Portal>
  );
}

/** One choice. Use `asChild` around a router `Link` for navigation; `tone="danger"` for destructive choices. */
export function MenuItem({
  className,
  tone = 'default',
  ...props
}: ComponentProps<typeof DropdownMenu.Item> & { tone?: 'default' | 'danger' }) {
  return (
    <DropdownMenu.Item
      className={cn(
        'flex cursor-default items-center gap-2 rounded-sm px-2.5 py-1.5 text-sm no-underline outline-none select-none',
        'data-highlighted:bg-paper-2 data-disabled:opacity-50',
        tone === 'danger' ? 'text-danger data-highlighted:text-danger' : 'text-ink data-highlighted:text-ink',
        className,
      )}
      {...props}
    />
  );
}

/** A non-interactive heading or summary inside the menu. */
export function MenuLabel({ className, ...props }: ComponentProps<typeof DropdownMenu.Label>) {
  return <DropdownMenu.Label className={cn('px-2.5 py-1.5 text-sm', className)} {...props} />;
}

export function MenuSeparator({ className, ...props }: ComponentProps<typeof DropdownMenu.Separator>) {
  return <DropdownMenu.Separator className={cn('my-1 h-px bg-rule', className)} {...props} />;
}
