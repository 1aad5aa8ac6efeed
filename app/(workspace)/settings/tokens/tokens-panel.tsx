'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { showActionErrors } from '@/components/forms/action-errors';
import { Button } from '@/components/ui/button';
import { FormMessage, TextField } from '@/components/ui/field';
import { createTokenSchema } from '@/lib/validation/tokens';
import { createTokenAction, revokeTokenAction } from '../../_private/actions';

interface TokenDto {
  id: string;
  name: string;
  prefix: string;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
}

const when = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short' });

export function TokensPanel({ tokens }: { tokens: TokenDto[] }) {
  const [created, setCreated] = useState<{ name: string; token: string } | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const form = useForm<z.input<typeof createTokenSchema>, unknown, z.output<typeof createTokenSchema>>({
    resolver: zodResolver(createTokenSchema),
    defaultValues: { name: '' },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <div className="flex flex-col gap-6">
      <form
        noValidate
        aria-label="Create a token"
        className="flex flex-col gap-3 sm:flex-row sm:items-end"
        onSubmit={form.handleSubmit(async (values) => {
          const result = await createTokenAction(values);
          if (result.ok) {
            setCreated({ name: result.data.accessToken.name, token: result.data.token });
            form.reset({ name: '' });
          } else {
            showActionErrors(result, form.setError);
          }
        })}
      >
        <TextField className="flex-1" label="Token name" placeholder="e.g. R session on my laptop" error={errors.name?.message} {...form.register('name')} />
        <Button type="submit" disabled={isSubmitting}>Create token</Button>
      </form>
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      {created && (
        <div role="status" className="flex flex-col gap-2 border border-caution/50 bg-caution-wash p-4 text-sm">
          <p>
            <strong>Copy the token “{created.name}” now.</strong> It is shown only once; Asterism keeps only its hash.
          </p>
          <code data-testid="new-token" className="select-all break-all bg-paper-raised px-2 py-1">{created.token}</code>
        </div>
      )}
      {problem && <FormMessage kind="error">{problem}</FormMessage>}
      {tokens.length === 0 ? (
        <p className="text-sm text-ink-muted">No tokens yet.</p>
      ) : (
        <table className="w-full border border-rule bg-paper-raised text-left text-sm">
          <thead className="border-b border-rule text-xs text-ink-muted">
            <tr>
              <th scope="col" className="px-4 py-2 font-medium">Name</th>
              <th scope="col" className="px-4 py-2 font-medium">Starts with</th>
              <th scope="col" className="px-4 py-2 font-medium">Created</th>
              <th scope="col" className="px-4 py-2 font-medium">Last used</th>
              <th scope="col" className="px-4 py-2 font-medium"><span className="sr-only">State</span></th>
            </tr>
          </thead>
          <tbody>
            {tokens.map((t) => (
              <tr key={t.id} className="border-b border-rule last:border-0">
                <td className="px-4 py-2">{t.name}</td>
                <td className="px-4 py-2"><code>{t.prefix}…</code></td>
                <td className="tabular px-4 py-2 text-ink-muted">{when.format(new Date(t.createdAt))}</td>
                <td className="tabular px-4 py-2 text-ink-muted">{t.lastUsedAt ? when.format(new Date(t.lastUsedAt)) : 'never'}</td>
                <td className="px-4 py-2 text-right">
                  {t.revokedAt ? (
                    <span className="text-ink-muted">revoked</span>
                  ) : (
                    <Button
                      variant="quiet"
                      aria-label={`Revoke ${t.name}`}
                      onClick={async () => {
                        const result = await revokeTokenAction(t.id);
                        setProblem(result.ok ? null : result.error);
                      }}
                    >
                      Revoke
                    </Button>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}
