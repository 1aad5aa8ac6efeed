import Link from 'next/link';

/** The wordmark: three linked points, the figure an asterism is named for. */
export function Brand({ href = '/' }: { href?: string }) {
  return (
    <Link href={href} className="inline-flex items-center gap-2 text-ink no-underline">
      <svg width="22" height="22" viewBox="0 0 22 22" aria-hidden="true">
        <path d="M4 15 L10 5 L18 12" fill="none" stroke="currentColor" strokeOpacity="0.45" strokeWidth="1" />
        <circle cx="4" cy="15" r="2.2" fill="var(--accent)" />
        <circle cx="10" cy="5" r="2.2" fill="currentColor" />
        <circle cx="18" cy="12" r="2.2" fill="currentColor" />
      </svg>
      <span className="text-base font-semibold tracking-tight">Asterism</span>
    </Link>
  );
}
