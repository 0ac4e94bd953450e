import { useId, type ComponentProps, type ReactNode } from 'react';

interface Choice {
  value: string;
  label: ReactNode;
  hint?: ReactNode;
}

interface ChoiceGroupProps {
  legend: string;
  hint?: ReactNode;
  error?: string;
  choices: readonly Choice[];
  /** The props for each radio input, e.g. react-hook-form's `register('field')`. */
  input: Omit<ComponentProps<'input'>, 'type' | 'value' | 'id'>;
  className?: string;
}

/** Radio buttons in a fieldset: the legend names the question, each label one answer. */
export function ChoiceGroup({ legend, hint, error, choices, input, className = '' }: ChoiceGroupProps) {
  const id = useId();
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  return (
    <fieldset
      role="radiogroup"
      aria-invalid={error ? true : undefined}
      className={`flex flex-col gap-1 ${className}`}
      aria-describedby={[hintId, errorId].filter(Boolean).join(' ') || undefined}>
      <legend className="font-semibold">{legend}</legend>
      {hint && (
        <p id={hintId} className="text-sm text-ink-muted">
          {hint}
        </p>
      )}
      <div className="mt-1 space-y-2">
        {choices.map((choice, i) => (
          <div key={choice.value} className="flex items-start gap-2">
            <input
              {...input}
              id={`${id}-${i}`}
              type="radio"
              value={choice.value}
              aria-describedby={choice.hint ? `${id}-${i}-hint` : undefined}
              className="mt-1 size-4 accent-[var(--color-accent)]"
            />
            <div>
              <label htmlFor={`${id}-${i}`}>{choice.label}</label>
              {choice.hint && (
                <p id={`${id}-${i}-hint`} className="text-sm text-ink-muted">
                  {choice.hint}
                </p>
              )}
            </div>
          </div>
        ))}
      </div>
      {error && (
        <p id={errorId} className="text-sm font-semibold text-danger">
          {error}
        </p>
      )}
    </fieldset>
  );
}

/** A checkbox with its label beside it and an optional hint below. */
export function Checkbox({ label, hint, ...props }: Omit<ComponentProps<'input'>, 'type'> & { label: ReactNode; hint?: ReactNode }) {
  const id = useId();
  return (
    <div className="flex items-start gap-2">
      <input {...props} id={id} type="checkbox" aria-describedby={hint ? `${id}-hint` : undefined} className="mt-1 size-4 accent-[var(--color-accent)]" />
      <div>
        <label htmlFor={id} className="font-semibold">
          {label}
        </label>
        {hint && (
          <p id={`${id}-hint`} className="text-sm text-ink-muted">
            {hint}
          </p>
        )}
      </div>
    </div>
  );
}
