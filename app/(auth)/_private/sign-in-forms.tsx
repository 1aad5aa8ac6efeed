'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { showActionErrors } from '@/components/forms/action-errors';
import { Button } from '@/components/ui/button';
import { FormMessage, TextField } from '@/components/ui/field';
import { magicLinkSchema, signInSchema } from '@/lib/validation/auth';
import { requestMagicLink, signInWithPassword } from './actions';

export function PasswordSignInForm({ returnTo, email }: { returnTo: string; email?: string }) {
  const form = useForm<z.input<typeof signInSchema>, unknown, z.output<typeof signInSchema>>({
    resolver: zodResolver(signInSchema),
    defaultValues: { email: email ?? '', password: '' },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <form
      noValidate
      className="flex flex-col gap-4"
      onSubmit={form.handleSubmit(async (values) => showActionErrors(await signInWithPassword(values, returnTo), form.setError))}
    >
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      <TextField label="E-mail" type="email" autoComplete="email" error={errors.email?.message} {...form.register('email')} />
      <TextField
        label="Password"
        type="password"
        autoComplete="current-password"
        error={errors.password?.message}
        {...form.register('password')}
      />
      <Button type="submit" disabled={isSubmitting}>
        {isSubmitting ? 'Signing in…' : 'Sign in'}
      </Button>
    </form>
  );
}

export function MagicLinkForm({ returnTo }: { returnTo: string }) {
  const form = useForm<z.input<typeof magicLinkSchema>, unknown, z.output<typeof magicLinkSchema>>({
    resolver: zodResolver(magicLinkSchema),
    defaultValues: { email: '' },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <form
      noValidate
      className="flex flex-col gap-3"
      onSubmit={form.handleSubmit(async (values) => showActionErrors(await requestMagicLink(values, returnTo), form.setError))}
    >
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      <TextField
        label="E-mail for a sign-in link"
        type="email"
        autoComplete="email"
        error={errors.email?.message}
        {...form.register('email')}
      />
      <Button type="submit" variant="secondary" disabled={isSubmitting}>
        {isSubmitting ? 'Sending…' : 'E-mail me a link'}
      </Button>
    </form>
  );
}
