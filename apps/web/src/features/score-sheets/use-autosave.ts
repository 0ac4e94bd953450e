import { useCallback, useEffect, useRef, useState } from 'react';
import { ApiError } from '@/lib/api-client';

export type SaveStatus =
  /** Nothing changed since the page opened. */
  | { kind: 'idle' }
  /** A change waits for a pause in typing, or is on its way. */
  | { kind: 'saving' }
  | { kind: 'saved'; at: Date }
  /** The page's own checks found problems: nothing was sent. */
  | { kind: 'blocked' }
  /** The server refused or could not be reached; what was typed is kept. */
  | { kind: 'failed'; error: Error };

interface AutosaveOptions<T> {
  value: T;
  /** False while a value must not be sent (read-only, or replaced by an upload). */
  enabled: boolean;
  /** True when the value has problems the server would refuse anyway. */
  blocked: (value: T) => boolean;
  save: (value: T) => Promise<void>;
  delay?: number;
  /** After a failure the server may recover from (unreachable, 5xx), try again this much later. */
  retryAfter?: number;
}

const mayPass = (error: unknown) => !(error instanceof ApiError) || error.status === 0 || error.status >= 500;

/**
 * Saves a value a moment after it stops changing, one request at a time, and says how that went.
 * `flush` saves now and answers whether everything typed is on the server.
 */
export function useAutosave<T>({ value, enabled, blocked, save, delay = 800, retryAfter = 10_000 }: AutosaveOptions<T>) {
  const [status, setStatus] = useState<SaveStatus>({ kind: 'idle' });
  const version = useRef(0);
  const savedVersion = useRef(0);
  const inFlight = useRef<Promise<boolean> | null>(null);
  const timer = useRef<ReturnType<typeof setTimeout> | undefined>(undefined);
  const latest = useRef({ value, enabled, blocked, save });
  latest.current = { value, enabled, blocked, save };
  const lastSeen = useRef(value);

  const run = useCallback(async (): Promise<boolean> => {
    clearTimeout(timer.current);
    while (inFlight.current) await inFlight.current;
    if (version.current === savedVersion.current) return true;
    const { value: snapshot, enabled: on, blocked: isBlocked, save: send } = latest.current;
    if (!on) return false;
    if (isBlocked(snapshot)) {
      setStatus({ kind: 'blocked' });
      return false;
    }
    const sending = version.current;
    setStatus({ kind: 'saving' });
    const attempt = (async () => {
      try {
        await send(snapshot);
        savedVersion.current = sending;
        if (version.current === sending) setStatus({ kind: 'saved', at: new Date() });
        return version.current === sending;
      } catch (error) {
        setStatus({ kind: 'failed', error: error instanceof Error ? error : new Error(String(error)) });
        if (mayPass(error)) timer.current = setTimeout(() => void run(), retryAfter);
        return false;
      }
    })();
    inFlight.current = attempt;
    try {
      return await attempt;
    } finally {
      inFlight.current = null;
    }
  }, [retryAfter]);

  useEffect(() => {
    if (value === lastSeen.current) return;
    lastSeen.current = value;
    version.current += 1;
    if (!latest.current.enabled) return;
    // A refusal stays on screen until the next attempt says otherwise.
    setStatus((s) => (s.kind === 'failed' || s.kind === 'blocked' ? s : { kind: 'saving' }));
    clearTimeout(timer.current);
    timer.current = setTimeout(() => void run(), delay);
  }, [value, delay, run]);

  useEffect(() => () => clearTimeout(timer.current), []);

  /** Stops a waiting save and lets one on its way finish, before something else writes the value. */
  const settle = useCallback(async () => {
    clearTimeout(timer.current);
    while (inFlight.current) await inFlight.current;
  }, []);

  /** The server holds `value` now (an upload replaced the rows): nothing is left to save. */
  const reset = useCallback((value: T) => {
    clearTimeout(timer.current);
    lastSeen.current = value;
    savedVersion.current = version.current;
    setStatus({ kind: 'saved', at: new Date() });
  }, []);

  const dirty = useCallback(() => version.current !== savedVersion.current, []);

  return { status, flush: run, settle, reset, dirty };
}
