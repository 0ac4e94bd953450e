import type { ComponentProps } from 'react';
import { Spinner } from '@/components/ui/spinner';

type Variant = 'primary' | 'secondary' | 'danger' | 'quiet';
type Size = 'md' | 'sm';

const variants: Record<Variant, string> = {
  primary: 'bg-accent text-white hover:bg-accent-strong border border-accent',
  secondary: 'bg-surface text-ink border border-line-strong hover:bg-sunken',
  danger: 'bg-surface text-danger border border-danger/60 hover:bg-danger-soft',
  quiet: 'bg-transparent text-accent border border-transparent hover:bg-accent-soft',
};

const sizes: Record<Size, string> = {
  md: 'px-4 py-2 text-base',
  sm: 'px-3 py-1 text-sm',
};

function buttonClasses(variant: Variant = 'primary', size: Size = 'md'): string {
  return `inline-flex items-center justify-center gap-2 rounded-md font-semibold no-underline transition-colors disabled:cursor-not-allowed disabled:opacity-60 ${variants[variant]} ${sizes[size]}`;
}

interface ButtonProps extends ComponentProps<'button'> {
  variant?: Variant;
  size?: Size;
  /** Shows a spinner and blocks further clicks while an action runs. */
  busy?: boolean;
}

export function Button({ variant = 'primary', size = 'md', busy = false, type = 'button', className = '', disabled, children, ...rest }: ButtonProps) {
  return (
    <button
      type={type}
      className={`${buttonClasses(variant, size)} ${className}`}
      disabled={disabled || busy}
      aria-busy={busy || undefined}
      {...rest}
    >
      {busy && <Spinner className="size-4" />}
      {children}
    </button>
  );
}

interface ButtonLinkProps extends ComponentProps<'a'> {
  variant?: Variant;
  size?: Size;
}

/** A link that looks like a button: for a full-page navigation, such as leaving for the district's sign-in. */
export function ButtonLink({ variant = 'primary', size = 'md', className = '', children, ...rest }: ButtonLinkProps) {
  return (
    <a className={`${buttonClasses(variant, size)} ${className}`} {...rest}>
      {children}
    </a>
  );
}
