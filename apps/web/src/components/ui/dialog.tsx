import { useEffect, useId, useRef, type ReactNode } from 'react';

interface DialogProps {
  open: boolean;
  title: string;
  description?: ReactNode;
  onClose: () => void;
  children: ReactNode;
}

/** The browser's modal <dialog>: it traps focus, closes on Escape and returns focus to the opener. */
export function Dialog({ open, title, description, onClose, children }: DialogProps) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) dialog.showModal();
    if (!open && dialog.open) dialog.close();
  }, [open]);

  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      onClose={onClose}
      className="m-auto w-[min(44rem,calc(100vw-2rem))] rounded-lg border border-line bg-paper p-0 text-ink shadow-xl"
    >
      {open && (
        <div className="p-6 sm:p-8">
          <h2 id={titleId} className="text-2xl font-semibold">
            {title}
          </h2>
          {description && <div className="mt-2 text-ink-muted">{description}</div>}
          <div className="mt-6">{children}</div>
        </div>
      )}
    </dialog>
  );
}
