import { useEffect, useId, useRef, type ReactNode } from "react";

/** A modal dialog (the browser's own), open while mounted; Escape or Cancel closes it. */
export default function Modal({
  title,
  onClose,
  backdrop = "backdrop:bg-black/60",
  children,
}: {
  title: string;
  onClose: () => void;
  /** How far the page behind is dimmed: a `backdrop:` class. */
  backdrop?: string;
  children: ReactNode;
}) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();
  useEffect(() => {
    const d = ref.current;
    if (d && !d.open) d.showModal();
    return () => d?.close();
  }, []);
  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      onClose={onClose}
      className={`m-auto w-[min(34rem,calc(100vw-1.5rem))] rounded-xl border border-line bg-surface p-0 text-ink ${backdrop}`}
    >
      <div className="max-h-[calc(100dvh-2rem)] overflow-y-auto p-4 sm:p-5">
        <h2 id={titleId} className="text-lg font-bold">
          {title}
        </h2>
        {children}
      </div>
    </dialog>
  );
}
