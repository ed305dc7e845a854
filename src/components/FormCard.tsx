import type { ReactNode, SyntheticEvent } from "react";

/**
 * A form kept behind a quiet button until it is wanted: the button opens it as a card of
 * fields, and Cancel folds it away. The card is one column on a phone; `className` adds the
 * wider grid and `span` makes the row of buttons cross it.
 */
export default function FormCard({
  open,
  openLabel,
  onOpen,
  onCancel,
  onSubmit,
  className,
  span,
  submit,
  children,
}: {
  open: boolean;
  /** What the closed form's button says, e.g. "Enter a break". */
  openLabel: string;
  onOpen: () => void;
  onCancel: () => void;
  onSubmit: (e: SyntheticEvent) => Promise<void>;
  className: string;
  span: string;
  /** The send button (a SubmitButton). */
  submit: ReactNode;
  children: ReactNode;
}) {
  if (!open)
    return (
      <div>
        <button type="button" className="btn btn-quiet" onClick={onOpen}>
          {openLabel}
        </button>
      </div>
    );
  return (
    <form
      className={`card grid grid-cols-1 gap-3 p-3 ${className}`}
      onSubmit={(e) => void onSubmit(e)}
      noValidate
    >
      {children}
      <div className={`flex flex-wrap gap-2 ${span}`}>
        {submit}
        <button type="button" className="btn btn-quiet" onClick={onCancel}>
          Cancel
        </button>
      </div>
    </form>
  );
}
