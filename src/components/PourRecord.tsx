import { useState } from "react";
import { useFieldArray, useForm } from "react-hook-form";
import { kgM3ToLbFt3, lbFt3ToKgM3 } from "@/domain/freshChecks";
import { displayTemp, fToC, inToMm, mmToIn, type UnitSystem } from "@/domain/units";
import { readProblem } from "@/lib/format";
import Field from "./Field";
import FreshTestsFields from "./FreshTestsFields";

/** The parts of a pour (GET /api/v1/pours/{id}) this island shows and edits. */
export interface PourRecordData {
  id: number;
  mix: { name: string };
  bed: string | null;
  notes: string | null;
  products: { product: string; piece_count: number; marks: string | null }[];
  piece_count: number;
  fresh_tests: {
    discharge_temp_c: number | null;
    discharge_temp_flag: "low" | "high" | "within" | null;
    placing_temp_min_c: number;
    placing_temp_max_c: number;
    placing_range_source: "mix" | "default";
    slump_mm: number | null;
    spread_mm: number | null;
    air_pct: number | null;
    unit_weight_kg_m3: number | null;
    cylinder_ids: string[];
  };
}

interface Props {
  initial: PourRecordData;
  units: UnitSystem;
  canEdit: boolean;
}

interface FormValues {
  bed: string;
  notes: string;
  products: { product: string; pieces: string }[];
  discharge_temp: string;
  consistency: "slump" | "spread";
  consistency_value: string;
  air_pct: string;
  unit_weight: string;
  cylinder_ids: string;
}

const numberOrNull = (v: string): number | null => (v.trim() === "" ? null : Number(v.trim()));
const fixed = (v: number, digits: number) => String(Math.round(v * 10 ** digits) / 10 ** digits);

/**
 * A pour's record as cast: products and pieces, bed, the fresh-concrete tests with the
 * discharge temperature held against the mix's placing range, and notes; the floor may edit it.
 */
export default function PourRecord({ initial, units, canEdit }: Props) {
  const [pour, setPour] = useState(initial);
  const [editing, setEditing] = useState(false);
  const [notice, setNotice] = useState<{ tone: "ok" | "error"; text: string } | null>(null);
  const us = units === "us";
  const t = (c: number) => {
    const d = displayTemp(c, units);
    return `${d.value} ${d.unit}`;
  };
  const f = pour.fresh_tests;

  const toForm = (p: PourRecordData): FormValues => ({
    bed: p.bed ?? "",
    notes: p.notes ?? "",
    products: p.products.length
      ? p.products.map((x) => ({ product: x.product, pieces: String(x.piece_count) }))
      : [{ product: "", pieces: "" }],
    discharge_temp:
      p.fresh_tests.discharge_temp_c === null
        ? ""
        : displayTemp(p.fresh_tests.discharge_temp_c, units).value,
    consistency: p.fresh_tests.spread_mm !== null ? "spread" : "slump",
    consistency_value: (() => {
      const mm = p.fresh_tests.spread_mm ?? p.fresh_tests.slump_mm;
      return mm === null ? "" : us ? fixed(mmToIn(mm), 2) : fixed(mm, 0);
    })(),
    air_pct: p.fresh_tests.air_pct === null ? "" : String(p.fresh_tests.air_pct),
    unit_weight:
      p.fresh_tests.unit_weight_kg_m3 === null
        ? ""
        : us
          ? fixed(kgM3ToLbFt3(p.fresh_tests.unit_weight_kg_m3), 1)
          : fixed(p.fresh_tests.unit_weight_kg_m3, 0),
    cylinder_ids: p.fresh_tests.cylinder_ids.join(", "),
  });
  const form = useForm<FormValues>({ defaultValues: toForm(initial) });
  const rows = useFieldArray({ control: form.control, name: "products" });
  const { errors, isSubmitting } = form.formState;

  async function save(v: FormValues) {
    setNotice(null);
    let bad = false;
    const fail = (name: Parameters<typeof form.setError>[0], message: string) => {
      form.setError(name, { message });
      bad = true;
    };
    const num = (name: keyof FormValues, text: string) => {
      const n = numberOrNull(text);
      if (n !== null && !Number.isFinite(n)) fail(name, "Enter a number");
      return n;
    };
    const temp = num("discharge_temp", v.discharge_temp);
    const cons = num("consistency_value", v.consistency_value);
    const air = num("air_pct", v.air_pct);
    const weight = num("unit_weight", v.unit_weight);
    const products: { product: string; piece_count: number }[] = [];
    v.products.forEach((p, i) => {
      if (p.product.trim() === "" && p.pieces.trim() === "") return;
      const n = Number(p.pieces);
      if (p.product.trim() === "") fail(`products.${i}.product`, "Name the product");
      if (!Number.isInteger(n) || n < 1) fail(`products.${i}.pieces`, "A whole number of pieces");
      products.push({ product: p.product.trim(), piece_count: n });
    });
    if (bad) return;
    const consMm = cons === null ? null : Math.round((us ? inToMm(cons) : cons) * 10) / 10;
    const body = {
      bed: v.bed.trim() || null,
      notes: v.notes.trim() || null,
      products,
      discharge_temp_c: temp === null ? null : Math.round((us ? fToC(temp) : temp) * 100) / 100,
      slump_mm: v.consistency === "slump" ? consMm : null,
      spread_mm: v.consistency === "spread" ? consMm : null,
      air_pct: air,
      unit_weight_kg_m3:
        weight === null ? null : Math.round((us ? lbFt3ToKgM3(weight) : weight) * 10) / 10,
      cylinder_ids: v.cylinder_ids
        .split(/[,;\n]/)
        .map((s) => s.trim())
        .filter(Boolean),
    };
    const res = await fetch(`/api/v1/pours/${pour.id}`, {
      method: "PATCH",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(body),
    });
    if (!res.ok) {
      const p = await readProblem(res);
      const map: Record<string, keyof FormValues> = {
        bed: "bed",
        notes: "notes",
        discharge_temp_c: "discharge_temp",
        slump_mm: "consistency_value",
        spread_mm: "consistency_value",
        air_pct: "air_pct",
        unit_weight_kg_m3: "unit_weight",
      };
      for (const [field, error] of Object.entries(p.fields)) {
        if (map[field]) form.setError(map[field], { message: error });
        else if (field.startsWith("cylinder_ids"))
          form.setError("cylinder_ids", { message: error });
      }
      setNotice({ tone: "error", text: p.message });
      return;
    }
    const next = (await res.json()) as PourRecordData;
    setPour(next);
    form.reset(toForm(next));
    setEditing(false);
    setNotice({ tone: "ok", text: "Saved." });
  }

  const flagBadge =
    f.discharge_temp_flag === "low" || f.discharge_temp_flag === "high" ? (
      <span className="inline-flex items-center gap-1 rounded-full bg-warn-bg px-2 py-0.5 text-xs font-bold text-warn">
        <span aria-hidden="true">▲</span>
        {f.discharge_temp_flag === "low" ? "Below" : "Above"} placing range
      </span>
    ) : f.discharge_temp_flag === "within" ? (
      <span className="inline-flex items-center gap-1 rounded-full bg-ok-bg px-2 py-0.5 text-xs font-bold text-ok">
        <span aria-hidden="true">●</span>Within placing range
      </span>
    ) : null;
  const rangeText = `${t(f.placing_temp_min_c)} to ${t(f.placing_temp_max_c)}${f.placing_range_source === "default" ? " (Plinth default: the mix sets none)" : ` for ${pour.mix.name}`}`;
  const consistencyText =
    f.spread_mm !== null
      ? `Spread ${us ? `${fixed(mmToIn(f.spread_mm), 1)} in.` : `${fixed(f.spread_mm, 0)} mm`}`
      : f.slump_mm !== null
        ? `Slump ${us ? `${fixed(mmToIn(f.slump_mm), 1)} in.` : `${fixed(f.slump_mm, 0)} mm`}`
        : "not recorded";

  const errId = (name: string, has: unknown) => (has ? `${name}-err` : undefined);

  return (
    <div className="grid gap-5">
      {notice && (
        <p
          role={notice.tone === "error" ? "alert" : "status"}
          className={`card p-3 font-semibold ${notice.tone === "error" ? "bg-alarm-bg text-alarm" : "bg-ok-bg text-ok"}`}
        >
          {notice.text}
        </p>
      )}
      {!editing ? (
        <>
          <section aria-labelledby="products-title" className="card p-4">
            <h2 id="products-title" className="mb-2 text-lg font-bold">
              Products <span className="font-normal text-muted">({pour.piece_count} pieces)</span>
            </h2>
            {pour.products.length === 0 ? (
              <p className="text-muted">No products recorded.</p>
            ) : (
              <ul className="divide-y divide-line">
                {pour.products.map((p, i) => (
                  <li key={i} className="flex items-baseline justify-between gap-3 py-2">
                    <span>
                      {p.product}
                      {p.marks && (
                        <span className="block text-xs text-muted">Marks: {p.marks}</span>
                      )}
                    </span>
                    <span className="figure text-lg font-bold">× {p.piece_count}</span>
                  </li>
                ))}
              </ul>
            )}
            <p className="mt-2 text-sm text-muted">Bed: {pour.bed ?? "not recorded"}</p>
          </section>

          <section aria-labelledby="fresh-title" className="card p-4">
            <h2 id="fresh-title" className="mb-2 text-lg font-bold">
              Fresh-concrete tests
            </h2>
            <dl className="grid grid-cols-2 gap-x-4 gap-y-3 text-sm sm:grid-cols-3">
              <div className="col-span-2 sm:col-span-3">
                <dt className="text-muted">Concrete temperature at discharge</dt>
                <dd className="flex flex-wrap items-center gap-2">
                  <span className="figure text-xl font-bold" data-testid="discharge-temp">
                    {f.discharge_temp_c === null ? "not recorded" : t(f.discharge_temp_c)}
                  </span>
                  {flagBadge}
                </dd>
                <dd className="hint">Placing range {rangeText}</dd>
                {(f.discharge_temp_flag === "low" || f.discharge_temp_flag === "high") && (
                  <dd className="mt-1 text-sm text-warn">
                    QC should review this pour: concrete placed{" "}
                    {f.discharge_temp_flag === "low"
                      ? "too cold gains strength slowly and may be hurt by frost"
                      : "too hot may lose long-term strength and crack"}
                    .
                  </dd>
                )}
              </div>
              <div>
                <dt className="text-muted">Consistency</dt>
                <dd className="figure font-semibold">{consistencyText}</dd>
              </div>
              <div>
                <dt className="text-muted">Air content</dt>
                <dd className="figure font-semibold">
                  {f.air_pct === null ? "not recorded" : `${f.air_pct} %`}
                </dd>
              </div>
              <div>
                <dt className="text-muted">Unit weight</dt>
                <dd className="figure font-semibold">
                  {f.unit_weight_kg_m3 === null
                    ? "not recorded"
                    : us
                      ? `${fixed(kgM3ToLbFt3(f.unit_weight_kg_m3), 1)} lb/ft³`
                      : `${fixed(f.unit_weight_kg_m3, 0)} kg/m³`}
                </dd>
              </div>
              <div className="col-span-2 sm:col-span-3">
                <dt className="text-muted">Cylinders made</dt>
                <dd className="figure font-semibold">
                  {f.cylinder_ids.length ? f.cylinder_ids.join(", ") : "none recorded"}
                </dd>
              </div>
            </dl>
          </section>

          <section aria-labelledby="notes-title" className="card p-4">
            <h2 id="notes-title" className="mb-2 text-lg font-bold">
              Notes
            </h2>
            <p className="whitespace-pre-line">
              {pour.notes ?? <span className="text-muted">None.</span>}
            </p>
          </section>
          {canEdit && (
            <div>
              <button type="button" className="btn btn-quiet" onClick={() => setEditing(true)}>
                Edit products, tests and notes
              </button>
            </div>
          )}
        </>
      ) : (
        <form
          className="card grid grid-cols-1 gap-5 p-4"
          onSubmit={form.handleSubmit(save)}
          noValidate
        >
          <h2 className="text-lg font-bold">Edit the record</h2>
          <Field id="pr-bed" label="Bed" error={errors.bed?.message}>
            <input id="pr-bed" className="input" autoComplete="off" {...form.register("bed")} />
          </Field>
          <fieldset className="grid min-w-0 grid-cols-1 gap-3">
            <legend className="label mb-1">Products and pieces</legend>
            <div
              className="grid grid-cols-[minmax(0,1fr)_6rem_2.75rem] gap-2 text-xs text-muted"
              aria-hidden="true"
            >
              <span>Product</span>
              <span>Pieces</span>
            </div>
            {rows.fields.map((row, i) => (
              <div
                key={row.id}
                className="grid grid-cols-[minmax(0,1fr)_6rem_2.75rem] items-start gap-2"
              >
                <div className="field">
                  <label className="sr-only" htmlFor={`pr-product-${i}`}>
                    Product {i + 1}
                  </label>
                  <input
                    id={`pr-product-${i}`}
                    className="input"
                    aria-invalid={errors.products?.[i]?.product ? true : undefined}
                    {...form.register(`products.${i}.product`)}
                  />
                  {errors.products?.[i]?.product && (
                    <p className="error-text">{errors.products[i]?.product?.message}</p>
                  )}
                </div>
                <div className="field">
                  <label className="sr-only" htmlFor={`pr-pieces-${i}`}>
                    Pieces of product {i + 1}
                  </label>
                  <input
                    id={`pr-pieces-${i}`}
                    className="input figure"
                    inputMode="numeric"
                    aria-invalid={errors.products?.[i]?.pieces ? true : undefined}
                    {...form.register(`products.${i}.pieces`)}
                  />
                  {errors.products?.[i]?.pieces && (
                    <p className="error-text">{errors.products[i]?.pieces?.message}</p>
                  )}
                </div>
                <button type="button" className="btn btn-quiet px-0" onClick={() => rows.remove(i)}>
                  <span aria-hidden="true">✕</span>
                  <span className="sr-only">Remove product {i + 1}</span>
                </button>
              </div>
            ))}
            <div>
              <button
                type="button"
                className="btn btn-quiet text-sm"
                onClick={() => rows.append({ product: "", pieces: "" })}
              >
                Add a product
              </button>
            </div>
          </fieldset>
          <fieldset className="grid min-w-0 grid-cols-1 gap-4 sm:grid-cols-2">
            <legend className="label mb-1">Fresh-concrete tests</legend>
            <Field
              id="pr-temp"
              label={`Concrete temperature at discharge (${us ? "°F" : "°C"})`}
              error={errors.discharge_temp?.message}
              hint={`Placing range ${rangeText}`}
            >
              <input
                id="pr-temp"
                className="input figure"
                inputMode="decimal"
                aria-invalid={errors.discharge_temp ? true : undefined}
                aria-describedby={errId("pr-temp", errors.discharge_temp)}
                {...form.register("discharge_temp")}
              />
            </Field>
            <FreshTestsFields form={form} idPrefix="pr" us={us} />
          </fieldset>
          <Field id="pr-notes" label="Notes" error={errors.notes?.message}>
            <textarea
              id="pr-notes"
              className="input min-h-20 py-2"
              rows={3}
              {...form.register("notes")}
            />
          </Field>
          <div className="flex flex-wrap gap-2">
            <button type="submit" className="btn btn-primary" disabled={isSubmitting}>
              {isSubmitting ? "Saving…" : "Save"}
            </button>
            <button
              type="button"
              className="btn btn-quiet"
              onClick={() => {
                form.reset(toForm(pour));
                setEditing(false);
              }}
            >
              Cancel
            </button>
          </div>
        </form>
      )}
    </div>
  );
}
