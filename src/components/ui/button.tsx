import type { ButtonHTMLAttributes } from 'react';

type Variant = 'primary' | 'secondary' | 'ghost' | 'danger';
type Size = 'sm' | 'md';

const base =
  'inline-flex items-center justify-center gap-1.5 rounded-md font-medium whitespace-nowrap transition-colors disabled:cursor-not-allowed disabled:opacity-55';
const variants: Record<Variant, string> = {
  primary: 'bg-teal text-white hover:bg-teal-ink border border-teal-ink/30',
  secondary: 'bg-paper-raised text-ink border border-rule-strong hover:bg-paper-sunk',
  ghost: 'text-ink-soft hover:bg-paper-sunk hover:text-ink',
  danger: 'bg-paper-raised text-danger border border-danger/50 hover:bg-danger-soft',
};
const sizes: Record<Size, string> = { sm: 'h-7 px-2.5 text-xs', md: 'h-8.5 px-3.5 text-sm' };

export function buttonClass(variant: Variant = 'secondary', size: Size = 'md'): string {
  return `${base} ${variants[variant]} ${sizes[size]}`;
}

export type ButtonProps = ButtonHTMLAttributes<HTMLButtonElement> & { variant?: Variant; size?: Size; busy?: boolean };

export function Button({ variant = 'secondary', size = 'md', busy = false, className = '', type = 'button', disabled, children, ...rest }: ButtonProps) {
  return (
    <button type={type} className={`${buttonClass(variant, size)} ${className}`} disabled={disabled || busy} aria-busy={busy || undefined} {...rest}>
      {busy && <span aria-hidden className="size-3 animate-spin rounded-full border-2 border-current border-r-transparent" />}
      {children}
    </button>
  );
}
