import type { ReactNode } from 'react';
import { Brand } from '@/components/brand';

export default function AuthLayout({ children }: { children: ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-rule px-6 py-4">
        <Brand />
      </header>
      <main id="main" className="mx-auto grid w-full max-w-4xl flex-1 gap-10 px-6 py-12 md:grid-cols-[1fr_380px]">
        <section className="hidden flex-col justify-center gap-4 md:flex" aria-label="About Asterism">
          <p className="small-caps text-sm text-ink-muted">A shared reading room for latent factors</p>
          <h1 className="text-3xl font-semibold leading-tight tracking-tight">
            Find out what your factors mean, together with the people who know the domain.
          </h1>
          <p className="max-w-md text-ink-muted">
            Import fitted factor matrices, align posterior draws, lay them out in two dimensions with an honest
            fidelity score, and name what you find so the whole team sees it.
          </p>
        </section>
        <div className="flex flex-col justify-center">{children}</div>
      </main>
    </div>
  );
}
