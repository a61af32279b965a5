import { useEffect, useId, useRef, type ReactNode } from 'react';

interface Props {
  title: string;
  onClose: () => void;
  children: ReactNode;
  /** Shown under the title, read out with it. */
  description?: ReactNode;
}

/**
 * A modal dialog on the native <dialog>: showModal() makes the rest of the page inert (focus stays
 * inside), Esc closes it, and focus goes back to what opened it when it closes.
 */
export function ModalDialog({ title, onClose, children, description }: Props) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();
  const descId = useId();
  const onCloseRef = useRef(onClose);
  useEffect(() => {
    onCloseRef.current = onClose;
  }, [onClose]);

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    const opener = document.activeElement instanceof HTMLElement ? document.activeElement : null;
    if (!dialog.open) dialog.showModal();
    // showModal() focuses the first control (the close button); start on the first field instead when one asks.
    dialog.querySelector<HTMLElement>('[data-autofocus]')?.focus();
    const onCancel = (e: Event) => {
      e.preventDefault();
      onCloseRef.current();
    };
    dialog.addEventListener('cancel', onCancel);
    return () => {
      dialog.removeEventListener('cancel', onCancel);
      if (dialog.open) dialog.close();
      if (opener?.isConnected) opener.focus();
    };
  }, []);

  return (
    <dialog
      ref={ref}
      role="dialog"
      aria-modal="true"
      aria-labelledby={titleId}
      aria-describedby={description ? descId : undefined}
      className="m-auto w-[min(36rem,calc(100vw-1.5rem))] max-h-[calc(100dvh-1.5rem)] overflow-y-auto rounded-card border border-line bg-surface p-0 text-ink shadow-2xl backdrop:bg-brand-strong/60"
    >
      <div className="flex flex-col gap-3 p-4">
        <div className="flex items-start justify-between gap-3">
          <h2 id={titleId} className="text-lg font-bold text-brand-strong">
            {title}
          </h2>
          <button type="button" className="-mt-1 -mr-1 min-h-11 min-w-11 rounded-md text-xl hover:bg-brand-soft" aria-label="Close" onClick={onClose}>
            ×
          </button>
        </div>
        {description ? (
          <div id={descId} className="text-sm">
            {description}
          </div>
        ) : null}
        {children}
      </div>
    </dialog>
  );
}
