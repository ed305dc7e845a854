import type { FieldErrors, UseFormRegister, UseFormReturn } from "react-hook-form";
import Field from "./Field";

/** The fresh-concrete tests as typed, shared by the new-pour form and the pour's record. */
export interface FreshTestsValues {
  consistency: "slump" | "spread";
  consistency_value: string;
  air_pct: string;
  unit_weight: string;
  cylinder_ids: string;
}

const errId = (name: string, has: unknown) => (has ? `${name}-err` : undefined);

/**
 * The fresh-concrete test fields after the discharge temperature: slump or spread (SCC) and
 * its value, air content, unit weight, and the ids of the cylinders made, in the reader's
 * units. Each input has its label, and its error tied to it by id (`${idPrefix}-air-err`...).
 */
export default function FreshTestsFields<T extends FreshTestsValues>({
  form,
  idPrefix,
  us,
}: {
  form: UseFormReturn<T>;
  /** Keeps the ids unique on the page: "np" gives np-consistency, np-air... */
  idPrefix: string;
  /** US customary units (in., lb/ft³) rather than metric (mm, kg/m³). */
  us: boolean;
}) {
  // T has every field named here; react-hook-form's path types cannot see that through T.
  const register = form.register as unknown as UseFormRegister<FreshTestsValues>;
  const errors = form.formState.errors as FieldErrors<FreshTestsValues>;
  const consistency = (form.watch as unknown as (n: "consistency") => "slump" | "spread")(
    "consistency",
  );
  const id = (name: string) => `${idPrefix}-${name}`;
  return (
    <>
      <div className="field">
        <span className="label" id={id("consistency-label")}>
          Consistency
        </span>
        <div className="flex gap-2" role="radiogroup" aria-labelledby={id("consistency-label")}>
          {(["slump", "spread"] as const).map((c) => (
            <label
              key={c}
              className={`btn flex-1 text-sm has-[:focus-visible]:outline-3 has-[:focus-visible]:outline-offset-2 has-[:focus-visible]:outline-[var(--c-focus)] ${consistency === c ? "btn-primary" : "btn-quiet"}`}
            >
              <input type="radio" value={c} className="sr-only" {...register("consistency")} />
              {c === "slump" ? "Slump" : "Spread (SCC)"}
            </label>
          ))}
        </div>
      </div>
      <Field
        id={id("consistency")}
        label={`${consistency === "slump" ? "Slump" : "Spread"} (${us ? "in." : "mm"})`}
        error={errors.consistency_value?.message}
      >
        <input
          id={id("consistency")}
          className="input figure"
          inputMode="decimal"
          aria-invalid={errors.consistency_value ? true : undefined}
          aria-describedby={errId(id("consistency"), errors.consistency_value)}
          {...register("consistency_value")}
        />
      </Field>
      <Field id={id("air")} label="Air content (%)" error={errors.air_pct?.message}>
        <input
          id={id("air")}
          className="input figure"
          inputMode="decimal"
          aria-invalid={errors.air_pct ? true : undefined}
          aria-describedby={errId(id("air"), errors.air_pct)}
          {...register("air_pct")}
        />
      </Field>
      <Field
        id={id("weight")}
        label={`Unit weight (${us ? "lb/ft³" : "kg/m³"})`}
        error={errors.unit_weight?.message}
      >
        <input
          id={id("weight")}
          className="input figure"
          inputMode="decimal"
          aria-invalid={errors.unit_weight ? true : undefined}
          aria-describedby={errId(id("weight"), errors.unit_weight)}
          {...register("unit_weight")}
        />
      </Field>
      <div className="sm:col-span-2">
        <Field
          id={id("cylinders")}
          label="Cylinders made (ids)"
          error={errors.cylinder_ids?.message}
          hint="Separate ids with commas."
        >
          <input
            id={id("cylinders")}
            className="input figure"
            autoComplete="off"
            aria-invalid={errors.cylinder_ids ? true : undefined}
            aria-describedby={errId(id("cylinders"), errors.cylinder_ids)}
            {...register("cylinder_ids")}
          />
        </Field>
      </div>
    </>
  );
}
