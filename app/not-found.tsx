import Link from 'next/link';

export default function NotFound() {
  return (
    <main id="main" className="mx-auto flex max-w-lg flex-col gap-3 px-6 py-24">
      <p className="small-caps text-sm text-ink-muted">Not found</p>
      <h1 className="text-2xl font-semibold">There is nothing here, or it is not yours to see.</h1>
      <Link className="text-accent underline-offset-2 hover:underline" href="/workspaces">
        Back to your workspaces
      </Link>
    </main>
  );
}
