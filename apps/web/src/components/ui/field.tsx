import { useId, type ComponentProps, type ReactNode } from 'react';

interface ControlProps {
  id: string;
  'aria-describedby'?: string;
  'aria-invalid'?: true;
}

interface FieldProps {
  label: string;
  hint?: ReactNode;
  error?: string;
  /** Hides the label visually (it stays the control's accessible name), e.g. inside a table row. */
  hideLabel?: boolean;
  className?: string;
  children: (control: ControlProps) => ReactNode;
}

/** A label, the control, a hint and the field's error, wired together for assistive technology. */
export function Field({ label, hint, error, hideLabel = false, className = '', children }: FieldProps) {
  const id = useId();
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={id} className={hideLabel ? 'sr-only' : 'font-semibold'}>
        {label}
      </label>
      {hint && (
        <p id={hintId} className="text-sm text-ink-muted">
          {hint}
        </p>
      )}
      {children({ id, 'aria-describedby': describedBy, 'aria-invalid': error ? true : undefined })}
      {error && (
        <p id={errorId} className="text-sm font-semibold text-danger">
          {error}
        </p>
      )}
    </div>
  );
}

const controlClasses =
  'w-full rounded-md border border-line-strong bg-surface px-3 py-2 text-base text-ink placeholder:text-ink-muted/80 aria-invalid:border-danger aria-invalid:border-2 disabled:bg-sunken';

export function TextInput({ className = '', ...props }: ComponentProps<'input'>) {
  return <input className={`${controlClasses} ${className}`} {...props} />;
}

export function Select({ className = '', ...props }: ComponentProps<'select'>) {
  return <select className={`${controlClasses} pr-8 ${className}`} {...props} />;
}

export function TextArea({ className = '', ...props }: ComponentProps<'textarea'>) {
  return <textarea className={`${controlClasses} ${className}`} {...props} />;
}
