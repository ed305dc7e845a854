import type { ComponentProps, ReactNode } from "react";

/** A labelled form field with its hint and its error, tied to the input by id. */
export default function Field({
  id,
  label,
  error,
  hint,
  hintId,
  children,
}: {
  id: string;
  label: string;
  error?: string | undefined;
  hint?: string;
  /** An id for the hint, for a control that names it in its aria-describedby. */
  hintId?: string;
  children: ReactNode;
}) {
  return (
    <div className="field">
      <label htmlFor={id}>{label}</label>
      {children}
      {hint && (
        <p id={hintId} className="hint">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${id}-err`} className="error-text">
          {error}
        </p>
      )}
    </div>
  );
}

/**
 * What ties a control to the words about it: aria-invalid while it has an error, and
 * aria-describedby naming the error (`${id}-err`, as Field renders it) and then any hints
 * that stand outside the field, by id. Both are left off when there is nothing to name.
 */
export function ariaFor(
  id: string,
  error: string | undefined,
  hintIds: readonly string[] = [],
): { "aria-invalid": true | undefined; "aria-describedby": string | undefined } {
  const ids = [...(error ? [`${id}-err`] : []), ...hintIds].join(" ");
  return { "aria-invalid": error ? true : undefined, "aria-describedby": ids || undefined };
}

interface LabelledProps {
  /** The control's id; the label points at it and the error is `${id}-err`. */
  id: string;
  label: string;
  error?: string | undefined;
  /** A hint shown under the control, inside the field. */
  hint?: string;
  /** Ids of hints outside the field that describe the control too (after its error). */
  describedBy?: readonly string[];
}

/** Splits a TextField's or SelectField's props into the Field's and the control's. */
function splitField<P extends LabelledProps & { className?: string | undefined }>({
  id,
  label,
  error,
  hint,
  describedBy,
  className = "input",
  ...control
}: P) {
  return {
    field: { id, label, error, hint },
    control: { id, className, ...ariaFor(id, error, describedBy), ...control },
  };
}

/**
 * A one-line input in a Field: its label, the input, its hint and its error, tied by id.
 * Every other prop goes to the input (react-hook-form's `register(...)` spreads in as is);
 * children (a datalist) follow the input.
 */
export function TextField({
  children,
  ...props
}: LabelledProps & Omit<ComponentProps<"input">, "id" | "children"> & { children?: ReactNode }) {
  const { field, control } = splitField(props);
  return (
    <Field {...field}>
      <input {...control} />
      {children}
    </Field>
  );
}

/**
 * A select in a Field, tied like TextField. Its options are the children, then `options`
 * given as [value, words] pairs.
 */
export function SelectField({
  children,
  options = [],
  ...props
}: LabelledProps &
  Omit<ComponentProps<"select">, "id"> & { options?: readonly (readonly [string, string])[] }) {
  const { field, control } = splitField(props);
  return (
    <Field {...field}>
      <select {...control}>
        {children}
        {options.map(([value, words]) => (
          <option key={value} value={value}>
            {words}
          </option>
        ))}
      </select>
    </Field>
  );
}

/** A form's send button: disabled while busy (or when told), its words saying what it is doing. */
export function SubmitButton({
  busy,
  busyLabel,
  disabled = busy,
  children,
}: {
  busy: boolean;
  /** What the button says while busy, e.g. "Saving…". */
  busyLabel: string;
  disabled?: boolean;
  children: ReactNode;
}) {
  return (
    <button type="submit" className="btn btn-primary" disabled={disabled}>
      {busy ? busyLabel : children}
    </button>
  );
}
