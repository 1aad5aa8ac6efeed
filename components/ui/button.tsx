import type { ButtonHTMLAttributes } from 'react';

type Variant = 'primary' | 'secondary' | 'quiet' | 'danger';

const VARIANTS: Record<Variant, string> = {
  primary: 'bg-accent text-accent-ink hover:opacity-90 border border-accent',
  secondary: 'bg-paper-raised text-ink border border-rule hover:border-ink-faint',
  quiet: 'bg-transparent text-accent border border-transparent hover:underline',
  danger: 'bg-paper-raised text-danger border border-danger/60 hover:bg-danger-wash',
};

export function buttonClasses(variant: Variant = 'primary', extra = ''): string {
  return `inline-flex items-center justify-center gap-2 px-3.5 py-2 text-sm font-medium transition disabled:cursor-not-allowed disabled:opacity-50 ${VARIANTS[variant]} ${extra}`;
}

export function Button({
  variant = 'primary',
  className = '',
  type = 'button',
  ...props
}: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: Variant }) {
  return <button type={type} className={buttonClasses(variant, className)} {...props} />;
}
