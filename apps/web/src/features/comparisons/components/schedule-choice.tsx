import { cronOfRhythm, rhythmOfCron, type MonitoringRhythm } from '@evenhand/entities';
import { useId, useState } from 'react';
import { TextInput } from '@/components/ui/field';

type Kind = 'none' | MonitoringRhythm['kind'];

const kinds: { value: Kind; label: string }[] = [
  { value: 'none', label: 'Only when someone runs a check' },
  { value: 'weekdays', label: 'Every weekday at' },
  { value: 'mondays', label: 'Every Monday at' },
  { value: 'custom', label: 'Custom (a cron expression)' },
];

const pad = (n: number) => String(n).padStart(2, '0');

interface ScheduleChoiceProps {
  legend: string;
  value: string | null;
  onChange: (cron: string | null) => void;
  error?: string;
}

/**
 * When automatic monitoring checks run, as a plain choice: every weekday or every Monday at a time, or a cron
 * expression for anything else. The plain choices write the cron expression underneath (`cronOfRhythm`).
 */
export function ScheduleChoice({ legend, value, onChange, error }: ScheduleChoiceProps) {
  const id = useId();
  const initial = value ? rhythmOfCron(value) : null;
  const [kind, setKind] = useState<Kind>(initial?.kind ?? 'none');
  const [time, setTime] = useState(initial && initial.kind !== 'custom' ? `${pad(initial.hour)}:${pad(initial.minute)}` : '02:00');
  const [custom, setCustom] = useState(initial?.kind === 'custom' ? initial.cron : '');

  const emit = (k: Kind, t: string, c: string) => {
    if (k === 'none') return onChange(null);
    if (k === 'custom') return onChange(c.trim() === '' ? null : cronOfRhythm({ kind: 'custom', cron: c }));
    const [hour, minute] = t.split(':').map(Number);
    onChange(Number.isInteger(hour) && Number.isInteger(minute) ? cronOfRhythm({ kind: k, hour, minute }) : null);
  };
  const errorId = error ? `${id}-error` : undefined;

  return (
    <fieldset className="flex flex-col gap-1" aria-describedby={errorId} aria-invalid={error ? true : undefined}>
      <legend className="font-semibold">{legend}</legend>
      <div className="mt-1 space-y-2">
        {kinds.map((k) => (
          <div key={k.value} className="flex flex-wrap items-center gap-2">
            <input
              type="radio"
              id={`${id}-${k.value}`}
              name={`${id}-kind`}
              value={k.value}
              checked={kind === k.value}
              onChange={() => {
                setKind(k.value);
                emit(k.value, time, custom);
              }}
              className="size-4 accent-[var(--color-accent)]"
            />
            <label htmlFor={`${id}-${k.value}`}>{k.label}</label>
            {(k.value === 'weekdays' || k.value === 'mondays') && kind === k.value && (
              <TextInput
                type="time"
                aria-label={`Time, ${k.label.toLowerCase()}`}
                value={time}
                onChange={(e) => {
                  setTime(e.target.value);
                  emit(kind, e.target.value, custom);
                }}
                className="w-32"
              />
            )}
          </div>
        ))}
        {kind === 'custom' && (
          <div className="flex flex-col gap-1 pl-6">
            <label htmlFor={`${id}-cron`} className="text-sm">
              Cron expression: minute, hour, day of month, month, weekday — e.g. “0 2 1 * *” for 02:00 on the first of each month
            </label>
            <TextInput
              id={`${id}-cron`}
              autoComplete="off"
              spellCheck={false}
              className="font-mono"
              value={custom}
              aria-invalid={error ? true : undefined}
              onChange={(e) => {
                setCustom(e.target.value);
                emit('custom', time, e.target.value);
              }}
            />
          </div>
        )}
      </div>
      {value && kind !== 'custom' && (
        <p className="text-sm text-ink-muted">
          Written as the cron expression <code className="font-mono">{value}</code>.
        </p>
      )}
      {error && (
        <p id={errorId} className="text-sm font-semibold text-danger">
          {error}
        </p>
      )}
    </fieldset>
  );
}
