export function Loading({ label = 'Loading…' }: { label?: string }) {
  return (
    <div role="status" className="flex items-center gap-2 py-6 text-sm text-ink-muted">
      <span aria-hidden className="size-3.5 animate-spin rounded-full border-2 border-teal border-r-transparent" />
      {label}
    </div>
  );
}
