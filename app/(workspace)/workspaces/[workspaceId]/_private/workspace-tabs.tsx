'use client';

import Link from 'next/link';
import { usePathname } from 'next/navigation';

export function WorkspaceTabs({ workspaceId, showSettings }: { workspaceId: string; showSettings: boolean }) {
  const pathname = usePathname();
  const base = `/workspaces/${workspaceId}`;
  const tabs = [
    { href: base, label: 'Overview' },
    { href: `${base}/fits`, label: 'Fits' },
    { href: `${base}/members`, label: 'Members' },
    ...(showSettings ? [{ href: `${base}/settings`, label: 'Settings' }] : []),
  ];
  return (
    <nav aria-label="Workspace sections" className="-mt-2 flex gap-5 text-sm">
      {tabs.map((tab) => {
        const current = pathname === tab.href;
        return (
          <Link
            key={tab.href}
            href={tab.href}
            aria-current={current ? 'page' : undefined}
            className={`border-b-2 pb-1 ${current ? 'border-accent text-ink' : 'border-transparent text-ink-muted hover:text-ink'}`}
          >
            {tab.label}
          </Link>
        );
      })}
    </nav>
  );
}
