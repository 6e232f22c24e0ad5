export function SiteFooter() {
  return (
    <footer className="mt-16 border-t border-rule bg-paper-2/60">
      <div className="mx-auto max-w-page px-4 py-6 text-sm text-ink-muted">
        <p className="max-w-prose">
          <strong className="font-semibold text-ink">Builders’ figures are their own.</strong> Follow the
          manufacturer’s manual, local rules and qualified practice. Engine and machining work can hurt people and
          machines.
        </p>
        <p className="mt-3 text-xs">Benchproof · readings tied to the footage they were taken in</p>
      </div>
    </footer>
  );
}
