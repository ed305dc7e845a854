import { useMemo, useState } from "react";
import { useFieldArray, useForm } from "react-hook-form";
import { dischargeTempFlag, lbFt3ToKgM3, placingRange } from "@/domain/freshChecks";
import { sensorState } from "@/domain/sensorState";
import { displayTemp, fToC, inToMm, type UnitSystem } from "@/domain/units";
import { readProblem } from "@/lib/format";
import { fromPlantInput, toPlantInput } from "@/lib/plantTime";
import Field from "./Field";
import FreshTestsFields from "./FreshTestsFields";

export interface MixOption {
  id: number;
  name: string;
  calibrated: boolean;
  placing_temp_min_c: number | null;
  placing_temp_max_c: number | null;
}

export interface SensorOption {
  id: string;
  label: string | null;
  kind: "bag" | "embedded" | "ambient" | null;
  area: string | null;
  last_temp_c: number | null;
  last_seen_at_ms: number | null;
  /** The open pour now holding the sensor, or null when it is free. */
  pour_code: string | null;
}

interface Props {
  mixes: MixOption[];
  sensors: SensorOption[];
  units: UnitSystem;
  timeZone: string;
  nowMs: number;
  lastCode: string | null;
  startOpen?: boolean;
}

interface FormValues {
  code: string;
  mix_id: string;
  cast_at: string;
  bed: string;
  products: { product: string; pieces: string }[];
  discharge_temp: string;
  consistency: "slump" | "spread";
  consistency_value: string;
  air_pct: string;
  unit_weight: string;
  cylinder_ids: string;
  notes: string;
}

const kindNames = { bag: "bag", embedded: "in concrete", ambient: "air" } as const;

/** A number typed in a box, or null when left empty; NaN when it is not a number. */
const numberOrNull = (v: string): number | null => (v.trim() === "" ? null : Number(v.trim()));

/**
 * The operator's new-pour form: mix, cast time (now by default, earlier if recorded late),
 * products and pieces, the sensors that watch it (grouped by area, free ones first), and the
 * fresh-concrete tests taken at casting, with the discharge temperature checked against the
 * mix's placing range as it is typed. On success the pour's own page opens.
 */
export default function PourNewForm({
  mixes,
  sensors,
  units,
  timeZone,
  nowMs,
  lastCode,
  startOpen = false,
}: Props) {
  const [open, setOpen] = useState(startOpen);
  const [picked, setPicked] = useState<Set<string>>(new Set());
  const [showBusy, setShowBusy] = useState(false);
  const [moveOk, setMoveOk] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const [sensorError, setSensorError] = useState<string | null>(null);
  const form = useForm<FormValues>({
    defaultValues: {
      code: "",
      mix_id: "",
      cast_at: toPlantInput(nowMs, timeZone),
      bed: "",
      products: [{ product: "", pieces: "" }],
      discharge_temp: "",
      consistency: "slump",
      consistency_value: "",
      air_pct: "",
      unit_weight: "",
      cylinder_ids: "",
      notes: "",
    },
  });
  const { errors, isSubmitting } = form.formState;
  const rows = useFieldArray({ control: form.control, name: "products" });
  const us = units === "us";
  const tempUnit = us ? "°F" : "°C";

  const mixId = form.watch("mix_id");
  const dischargeText = form.watch("discharge_temp");
  const mix = mixes.find((m) => String(m.id) === mixId);
  const range = mix ? placingRange(mix.placing_temp_min_c, mix.placing_temp_max_c) : null;
  const dischargeC = (() => {
    const n = numberOrNull(dischargeText);
    return n === null || !Number.isFinite(n) ? null : us ? fToC(n) : n;
  })();
  const flag = range ? dischargeTempFlag(dischargeC, range) : null;
  const shownTemp = (c: number) => `${displayTemp(c, units, 0).value} ${tempUnit}`;

  const groups = useMemo(() => {
    const byArea = new Map<string, SensorOption[]>();
    for (const s of sensors) {
      const key = s.area ?? "Not placed";
      byArea.set(key, [...(byArea.get(key) ?? []), s]);
    }
    return [...byArea.entries()];
  }, [sensors]);
  const pickedBusy = sensors.filter((s) => picked.has(s.id) && s.pour_code !== null);
  const busyCount = sensors.filter((s) => s.pour_code !== null).length;

  const toggle = (id: string) =>
    setPicked((prev) => {
      const next = new Set(prev);
      if (next.has(id)) next.delete(id);
      else next.add(id);
      return next;
    });

  async function submit(v: FormValues) {
    setProblem(null);
    setSensorError(null);
    let bad = false;
    const fail = (name: Parameters<typeof form.setError>[0], message: string) => {
      form.setError(name, { message });
      bad = true;
    };
    const castAtMs = fromPlantInput(v.cast_at, timeZone);
    if (castAtMs === null) fail("cast_at", "Enter the date and time of casting");
    else if (castAtMs > Date.now() + 10 * 60_000) fail("cast_at", "The cast time is in the future");
    const products: { product: string; piece_count: number }[] = [];
    v.products.forEach((p, i) => {
      if (p.product.trim() === "" && p.pieces.trim() === "") return;
      const n = Number(p.pieces);
      if (p.product.trim() === "") fail(`products.${i}.product`, "Name the product");
      if (!Number.isInteger(n) || n < 1) fail(`products.${i}.pieces`, "A whole number of pieces");
      products.push({ product: p.product.trim(), piece_count: n });
    });
    const num = (name: keyof FormValues, text: string, what: string) => {
      const n = numberOrNull(text);
      if (n !== null && !Number.isFinite(n)) {
        fail(name, `Enter ${what} as a number`);
        return null;
      }
      return n;
    };
    const tempIn = num("discharge_temp", v.discharge_temp, "the temperature");
    const consistencyIn = num("consistency_value", v.consistency_value, "the value");
    const airIn = num("air_pct", v.air_pct, "the air content");
    const weightIn = num("unit_weight", v.unit_weight, "the unit weight");
    if (pickedBusy.length > 0 && !moveOk) {
      setSensorError(
        "Some sensors you picked are on another pour. Tick “Move them to this pour” or untick them.",
      );
      bad = true;
    }
    if (bad) return;

    const cylinderIds = v.cylinder_ids
      .split(/[,;\n]/)
      .map((s) => s.trim())
      .filter(Boolean);
    const consistencyMm =
      consistencyIn === null
        ? null
        : Math.round((us ? inToMm(consistencyIn) : consistencyIn) * 10) / 10;
    const body = {
      code: v.code.trim(),
      mix_id: Number(v.mix_id),
      cast_at: new Date(castAtMs!).toISOString(),
      sensors: [...picked],
      ...(pickedBusy.length > 0 && { move: true }),
      ...(products.length > 0 && { products }),
      ...(v.bed.trim() && { bed: v.bed.trim() }),
      ...(v.notes.trim() && { notes: v.notes.trim() }),
      ...(tempIn !== null && {
        discharge_temp_c: Math.round((us ? fToC(tempIn) : tempIn) * 100) / 100,
      }),
      ...(consistencyMm !== null &&
        (v.consistency === "slump" ? { slump_mm: consistencyMm } : { spread_mm: consistencyMm })),
      ...(airIn !== null && { air_pct: airIn }),
      ...(weightIn !== null && {
        unit_weight_kg_m3: Math.round((us ? lbFt3ToKgM3(weightIn) : weightIn) * 10) / 10,
      }),
      ...(cylinderIds.length > 0 && { cylinder_ids: cylinderIds }),
    };
    const res = await fetch("/api/v1/pours", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(body),
    });
    if (res.status === 201) {
      const pour = (await res.json()) as { id: number };
      window.location.assign(`/pours/${pour.id}`);
      return;
    }
    const p = await readProblem(res);
    const map: Record<string, keyof FormValues> = {
      code: "code",
      mix_id: "mix_id",
      cast_at: "cast_at",
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
      else if (field.startsWith("sensors")) setSensorError(error);
      else if (field.startsWith("cylinder_ids")) form.setError("cylinder_ids", { message: error });
    }
    if (res.status === 409 && /sensor|move/i.test(p.message)) setSensorError(p.message);
    else if (res.status === 409) form.setError("code", { message: p.message });
    setProblem(p.message);
  }

  const errId = (name: string, has: unknown) => (has ? `${name}-err` : undefined);

  if (!open)
    return (
      <div className="mb-5">
        <button
          type="button"
          className="btn btn-primary w-full sm:w-auto"
          aria-expanded="false"
          aria-controls="new-pour"
          onClick={() => setOpen(true)}
        >
          New pour
        </button>
      </div>
    );

  return (
    <section id="new-pour" aria-labelledby="new-pour-title" className="card mb-6 p-4 sm:p-5">
      <div className="mb-3 flex items-start justify-between gap-3">
        <div>
          <h2 id="new-pour-title" className="text-lg font-bold">
            New pour
          </h2>
          <p className="hint">
            Times are plant time ({timeZone}).
            {lastCode && (
              <>
                {" "}
                Last pour recorded: <span className="figure">{lastCode}</span>.
              </>
            )}
          </p>
        </div>
        <button
          type="button"
          className="btn btn-quiet text-sm"
          aria-expanded="true"
          aria-controls="new-pour"
          onClick={() => setOpen(false)}
        >
          Close
        </button>
      </div>

      {problem && (
        <div role="alert" className="card mb-4 bg-alarm-bg p-3 font-semibold text-alarm">
          {problem}
        </div>
      )}

      <form className="grid grid-cols-1 gap-5" onSubmit={form.handleSubmit(submit)} noValidate>
        <div className="grid grid-cols-1 gap-4 sm:grid-cols-2">
          <Field id="np-code" label="Pour code" error={errors.code?.message}>
            <input
              id="np-code"
              className="input figure"
              autoComplete="off"
              autoCapitalize="characters"
              aria-invalid={errors.code ? true : undefined}
              aria-describedby={errId("np-code", errors.code)}
              {...form.register("code", {
                validate: (v) => v.trim() !== "" || "Enter the pour's code",
              })}
            />
          </Field>
          <Field id="np-mix" label="Mix" error={errors.mix_id?.message}>
            <select
              id="np-mix"
              className="input"
              aria-invalid={errors.mix_id ? true : undefined}
              aria-describedby={errId("np-mix", errors.mix_id)}
              {...form.register("mix_id", { validate: (v) => v !== "" || "Pick a mix" })}
            >
              <option value="">Pick a mix…</option>
              {mixes.map((m) => (
                <option key={m.id} value={m.id}>
                  {m.name}
                  {m.calibrated ? "" : " (not calibrated)"}
                </option>
              ))}
            </select>
          </Field>
          {mix && !mix.calibrated && (
            <p className="card bg-warn-bg p-3 text-sm text-warn sm:col-span-2" role="note">
              <span aria-hidden="true">▲ </span>
              {mix.name} has no strength-maturity curve yet: Plinth records the pour&apos;s maturity
              now, and shows strength once QC calibrates the mix.
            </p>
          )}
          <Field id="np-cast" label="Cast at" error={errors.cast_at?.message}>
            <input
              id="np-cast"
              type="datetime-local"
              className="input min-w-0"
              aria-invalid={errors.cast_at ? true : undefined}
              aria-describedby={`np-cast-hint${errors.cast_at ? " np-cast-err" : ""}`}
              {...form.register("cast_at")}
            />
            <div className="flex items-start justify-between gap-2">
              <p id="np-cast-hint" className="hint">
                Now by default. An earlier time is fine: readings since then are counted.
              </p>
              <button
                type="button"
                className="btn btn-quiet min-h-10 shrink-0 px-3 text-sm"
                onClick={() => form.setValue("cast_at", toPlantInput(Date.now(), timeZone))}
              >
                Set to now
              </button>
            </div>
          </Field>
          <Field id="np-bed" label="Bed (optional)" error={errors.bed?.message}>
            <input id="np-bed" className="input" autoComplete="off" {...form.register("bed")} />
          </Field>
        </div>

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
                <label className="sr-only" htmlFor={`np-product-${i}`}>
                  Product {i + 1}
                </label>
                <input
                  id={`np-product-${i}`}
                  className="input"
                  autoComplete="off"
                  aria-invalid={errors.products?.[i]?.product ? true : undefined}
                  {...form.register(`products.${i}.product`)}
                />
                {errors.products?.[i]?.product && (
                  <p className="error-text">{errors.products[i]?.product?.message}</p>
                )}
              </div>
              <div className="field">
                <label className="sr-only" htmlFor={`np-pieces-${i}`}>
                  Pieces of product {i + 1}
                </label>
                <input
                  id={`np-pieces-${i}`}
                  className="input figure"
                  inputMode="numeric"
                  aria-invalid={errors.products?.[i]?.pieces ? true : undefined}
                  {...form.register(`products.${i}.pieces`)}
                />
                {errors.products?.[i]?.pieces && (
                  <p className="error-text">{errors.products[i]?.pieces?.message}</p>
                )}
              </div>
              <button
                type="button"
                className="btn btn-quiet px-0"
                onClick={() => rows.remove(i)}
                disabled={rows.fields.length === 1}
              >
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

        <fieldset
          className="grid min-w-0 grid-cols-1 gap-2"
          aria-describedby={sensorError ? "np-sensors-err" : undefined}
        >
          <legend className="label mb-1">
            Sensors on this pour{" "}
            <span className="font-normal text-muted">({picked.size} picked)</span>
          </legend>
          <p className="hint">
            Free sensors are listed by area. A sensor watches one pour at a time.
          </p>
          {groups.map(([area, list]) => {
            const shown = list.filter((s) => showBusy || s.pour_code === null || picked.has(s.id));
            if (shown.length === 0) return null;
            return (
              <div key={area} className="rounded-lg border border-line">
                <p className="border-b border-line bg-surface-2 px-3 py-1.5 text-sm font-bold">
                  {area}
                </p>
                <ul className="grid sm:grid-cols-2">
                  {shown.map((s) => {
                    const live = sensorState(s.last_seen_at_ms, nowMs);
                    return (
                      <li key={s.id}>
                        <label className="flex min-h-12 cursor-pointer items-center gap-3 px-3 py-2 hover:bg-surface-2">
                          <input
                            type="checkbox"
                            className="h-5 w-5 shrink-0"
                            checked={picked.has(s.id)}
                            onChange={() => toggle(s.id)}
                            data-sensor={s.id}
                          />
                          <span className="min-w-0 flex-1">
                            <span className="figure font-semibold">{s.id}</span>{" "}
                            <span className="text-sm text-muted">
                              {s.label ?? (s.kind ? kindNames[s.kind] : "unnamed")}
                            </span>
                            <span className="block text-xs">
                              {s.pour_code ? (
                                <span className="font-semibold text-warn">
                                  <span aria-hidden="true">▲ </span>on {s.pour_code}
                                </span>
                              ) : (
                                <span className="text-ok">
                                  <span aria-hidden="true">● </span>free
                                </span>
                              )}
                              {" · "}
                              {live === "never"
                                ? "no reading yet"
                                : live === "silent"
                                  ? "silent"
                                  : s.last_temp_c !== null
                                    ? shownTemp(s.last_temp_c)
                                    : "reporting"}
                            </span>
                          </span>
                        </label>
                      </li>
                    );
                  })}
                </ul>
              </div>
            );
          })}
          {busyCount > 0 && (
            <label className="flex min-h-11 items-center gap-3 text-sm">
              <input
                type="checkbox"
                className="h-5 w-5"
                checked={showBusy}
                onChange={(e) => setShowBusy(e.target.checked)}
              />
              Show the {busyCount} sensors on other pours too
            </label>
          )}
          {pickedBusy.length > 0 && (
            <div className="card bg-warn-bg p-3 text-sm text-warn">
              <p className="font-semibold">
                <span aria-hidden="true">▲ </span>
                {pickedBusy.map((s) => `${s.id} is on ${s.pour_code}`).join("; ")}.
              </p>
              <label className="mt-2 flex min-h-11 items-center gap-3 text-ink">
                <input
                  type="checkbox"
                  className="h-5 w-5"
                  checked={moveOk}
                  onChange={(e) => setMoveOk(e.target.checked)}
                />
                Move them to this pour (their time on the other pour ends at this cast time)
              </label>
            </div>
          )}
          {sensorError && (
            <p id="np-sensors-err" className="error-text" role="alert">
              {sensorError}
            </p>
          )}
        </fieldset>

        <fieldset className="grid min-w-0 grid-cols-1 gap-4 sm:grid-cols-2">
          <legend className="label mb-1">Fresh-concrete tests at casting (optional)</legend>
          <Field
            id="np-temp"
            label={`Concrete temperature at discharge (${tempUnit})`}
            error={errors.discharge_temp?.message}
          >
            <input
              id="np-temp"
              className="input figure"
              inputMode="decimal"
              aria-invalid={errors.discharge_temp ? true : undefined}
              aria-describedby={`np-temp-range${errors.discharge_temp ? " np-temp-err" : ""}`}
              {...form.register("discharge_temp")}
            />
          </Field>
          <div id="np-temp-range" className="self-end text-sm" aria-live="polite">
            {range ? (
              <>
                {flag === "low" || flag === "high" ? (
                  <p className="card bg-warn-bg p-2 font-semibold text-warn">
                    <span aria-hidden="true">▲ </span>
                    {flag === "low" ? "Below" : "Above"} the placing range of {mix!.name}:{" "}
                    {shownTemp(range.minC)} to {shownTemp(range.maxC)}. It will be flagged for QC.
                  </p>
                ) : (
                  <p className="hint">
                    Placing range{range.source === "default" ? " (Plinth default)" : ""}:{" "}
                    {shownTemp(range.minC)} to {shownTemp(range.maxC)}
                    {flag === "within" && <span className="text-ok"> · within</span>}
                  </p>
                )}
              </>
            ) : (
              <p className="hint">Pick a mix to see its placing range.</p>
            )}
          </div>
          <FreshTestsFields form={form} idPrefix="np" us={us} />
        </fieldset>

        <Field id="np-notes" label="Notes (optional)" error={errors.notes?.message}>
          <textarea
            id="np-notes"
            className="input min-h-20 py-2"
            rows={3}
            {...form.register("notes")}
          />
        </Field>

        <div className="flex flex-wrap items-center gap-3">
          <button
            type="submit"
            className="btn btn-primary w-full sm:w-auto"
            disabled={isSubmitting}
          >
            {isSubmitting ? "Recording…" : "Record pour"}
          </button>
          <p className="hint" aria-live="polite">
            {isSubmitting
              ? "Saving and counting the readings since the cast time…"
              : `${picked.size} sensor${picked.size === 1 ? "" : "s"} picked`}
          </p>
        </div>
      </form>
    </section>
  );
}
