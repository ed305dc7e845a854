import { useId, useRef, useState, type SubmitEvent } from "react";
import { kgM3ToLbYd3, lbYd3ToKgM3, psiToMpa, type UnitSystem } from "@/domain/units";
import { readProblem } from "@/lib/format";
import Field from "./Field";
import {
  readTyped,
  sendJson,
  strengthToPsi,
  strengthUnit,
  tempInput,
  tempToC,
  tempUnit,
  type MixItem,
} from "./MixShared";

interface Props {
  units: UnitSystem;
  /** The mix to edit; absent to add a new one. */
  mix?: MixItem;
}

type Key =
  | "name"
  | "description"
  | "design"
  | "strip"
  | "ship"
  | "datum"
  | "activation"
  | "placing_min"
  | "placing_max"
  | "cement"
  | "scm"
  | "water"
  | "fine"
  | "coarse"
  | "fine_moisture"
  | "coarse_moisture";

/** The API field each form field is sent as. */
const apiField: Record<Key, string> = {
  name: "name",
  description: "description",
  design: "design_strength_psi",
  strip: "strip_strength_psi",
  ship: "ship_strength_psi",
  datum: "datum_temp_c",
  activation: "activation_energy_j_mol",
  placing_min: "placing_temp_min_c",
  placing_max: "placing_temp_max_c",
  cement: "cement_lb_yd3",
  scm: "scm_lb_yd3",
  water: "water_lb_yd3",
  fine: "fine_agg_lb_yd3",
  coarse: "coarse_agg_lb_yd3",
  fine_moisture: "fine_agg_moisture_pct",
  coarse_moisture: "coarse_agg_moisture_pct",
};
const formField = Object.fromEntries(Object.entries(apiField).map(([k, v]) => [v, k])) as Record<
  string,
  Key
>;

const required: Key[] = ["name", "design", "strip", "ship", "datum", "activation"];
const textKeys: Key[] = ["name", "description"];

function strengthInput(psi: number, u: UnitSystem): string {
  return u === "us" ? String(Math.round(psi)) : String(Number(psiToMpa(psi).toFixed(1)));
}

function initialValues(mix: MixItem | undefined, u: UnitSystem): Record<Key, string> {
  const prop = (lb: number | null, kg: number | null) =>
    lb === null
      ? ""
      : u === "us"
        ? String(Math.round(lb))
        : String(Math.round(kg ?? lbYd3ToKgM3(lb)));
  const opt = (v: number | null | undefined) => (v === null || v === undefined ? "" : String(v));
  if (!mix) {
    return {
      name: "",
      description: "",
      design: "",
      strip: "",
      ship: "",
      // −10 °C and 41.57 kJ/mol (Q = 5000 K) are the usual starting values (ASTM C1074); QC sets the mix's own.
      datum: tempInput(-10, u),
      activation: "41.57",
      placing_min: "",
      placing_max: "",
      cement: "",
      scm: "",
      water: "",
      fine: "",
      coarse: "",
      fine_moisture: "",
      coarse_moisture: "",
    };
  }
  return {
    name: mix.name,
    description: mix.description ?? "",
    design: strengthInput(mix.design_strength_psi, u),
    strip: strengthInput(mix.strip_strength_psi, u),
    ship: strengthInput(mix.ship_strength_psi, u),
    datum: tempInput(mix.datum_temp_c, u),
    activation: String(Number((mix.activation_energy_j_mol / 1000).toFixed(3))),
    placing_min: mix.placing_temp_min_c === null ? "" : tempInput(mix.placing_temp_min_c, u),
    placing_max: mix.placing_temp_max_c === null ? "" : tempInput(mix.placing_temp_max_c, u),
    cement: prop(mix.cement_lb_yd3, mix.cement_kg_m3),
    scm: prop(mix.scm_lb_yd3, mix.scm_kg_m3),
    water: prop(mix.water_lb_yd3, mix.water_kg_m3),
    fine: prop(mix.fine_agg_lb_yd3, mix.fine_agg_kg_m3),
    coarse: prop(mix.coarse_agg_lb_yd3, mix.coarse_agg_kg_m3),
    fine_moisture: opt(mix.fine_agg_moisture_pct),
    coarse_moisture: opt(mix.coarse_agg_moisture_pct),
  };
}

/**
 * Add a mix, or edit one: design, strip and ship strengths, datum temperature and activation
 * energy, the placing temperature range, and batch proportions per cubic yard (or metre), in the
 * person's own units. An edit sends only what changed.
 */
export default function MixForm({ units, mix }: Props) {
  const uid = useId();
  const start = initialValues(mix, units);
  const [values, setValues] = useState(start);
  const [errors, setErrors] = useState<Partial<Record<Key, string>>>({});
  const [message, setMessage] = useState<{ tone: "ok" | "error"; text: string } | null>(null);
  const [busy, setBusy] = useState(false);
  const formRef = useRef<HTMLFormElement>(null);
  /** Takes the keyboard to the first field in error once it is drawn. */
  const focusFirstError = () =>
    requestAnimationFrame(() =>
      formRef.current?.querySelector<HTMLElement>('[aria-invalid="true"]')?.focus(),
    );
  const sUnit = strengthUnit(units);
  const tUnit = tempUnit(units);
  const pUnit = units === "us" ? "lb/yd³" : "kg/m³";

  const set = (k: Key) => (e: { target: { value: string } }) =>
    setValues((v) => ({ ...v, [k]: e.target.value }));

  /** The API value of a field, or an error text. */
  function toApi(k: Key, text: string): { value: unknown } | { error: string } {
    if (textKeys.includes(k)) {
      const t = text.trim();
      if (k === "name" && t === "") return { error: "Enter a name" };
      return { value: k === "description" && t === "" ? null : t };
    }
    if (text.trim() === "") {
      return required.includes(k) ? { error: "Enter a number" } : { value: null };
    }
    const n = readTyped(text);
    if (!Number.isFinite(n)) return { error: "Enter a number" };
    switch (k) {
      case "design":
      case "strip":
      case "ship":
        return { value: Math.round(strengthToPsi(n, units) * 100) / 100 };
      case "datum":
      case "placing_min":
      case "placing_max":
        return { value: Math.round(tempToC(n, units) * 1000) / 1000 };
      case "activation":
        return { value: Math.round(n * 1000) };
      case "cement":
      case "scm":
      case "water":
      case "fine":
      case "coarse":
        return { value: units === "us" ? n : Math.round(kgM3ToLbYd3(n) * 1000) / 1000 };
      default:
        return { value: n };
    }
  }

  async function submit(e: SubmitEvent) {
    e.preventDefault();
    setMessage(null);
    const body: Record<string, unknown> = {};
    const errs: Partial<Record<Key, string>> = {};
    for (const k of Object.keys(values) as Key[]) {
      if (mix && values[k] === start[k]) continue;
      const r = toApi(k, values[k]);
      if ("error" in r) errs[k] = r.error;
      else if (!(r.value === null && !mix)) body[apiField[k]] = r.value;
    }
    setErrors(errs);
    if (Object.keys(errs).length > 0) {
      setMessage({ tone: "error", text: "Some fields need a look." });
      focusFirstError();
      return;
    }
    if (mix && Object.keys(body).length === 0) {
      setMessage({ tone: "ok", text: "Nothing changed." });
      return;
    }
    setBusy(true);
    const res = await sendJson(
      mix ? `/api/v1/mixes/${mix.id}` : "/api/v1/mixes",
      mix ? "PATCH" : "POST",
      body,
    );
    setBusy(false);
    if (!res.ok) {
      const p = await readProblem(res);
      const fieldErrs: Partial<Record<Key, string>> = {};
      for (const [f, text] of Object.entries(p.fields)) {
        const k = formField[f];
        if (k) fieldErrs[k] = text;
      }
      setErrors(fieldErrs);
      setMessage({ tone: "error", text: p.message });
      focusFirstError();
      return;
    }
    const saved = (await res.json()) as MixItem & { points_rebased?: number };
    const maturityMoved = saved.points_rebased !== undefined;
    window.location.assign(
      `/mixes/${saved.id}?${mix ? (maturityMoved ? "saved=maturity" : "saved=1") : "created=1"}`,
    );
  }

  const id = (k: Key) => `${uid}-${k}`;
  const input = (k: Key, opts: { label: string; hint?: string; unit?: string; wide?: boolean }) => (
    <div className={opts.wide ? "sm:col-span-2" : undefined}>
      <Field
        id={id(k)}
        label={opts.unit ? `${opts.label} (${opts.unit})` : opts.label}
        error={errors[k]}
        hint={opts.hint}
      >
        <input
          id={id(k)}
          className="input figure"
          inputMode={textKeys.includes(k) ? undefined : "decimal"}
          autoComplete="off"
          value={values[k]}
          onChange={set(k)}
          aria-invalid={errors[k] ? true : undefined}
          aria-describedby={errors[k] ? `${id(k)}-err` : undefined}
        />
      </Field>
    </div>
  );

  return (
    <form
      ref={formRef}
      onSubmit={submit}
      noValidate
      className="grid grid-cols-1 gap-5"
      aria-label={mix ? `Edit ${mix.name}` : "Add a mix"}
    >
      <fieldset className="grid grid-cols-1 gap-4 sm:grid-cols-2">
        <legend className="mb-2 text-base font-bold">The mix</legend>
        {input("name", { label: "Name", hint: "As the batch tickets call it, e.g. HS-10" })}
        <div className="sm:col-span-2">
          <Field id={id("description")} label="Description" error={errors.description}>
            <textarea
              id={id("description")}
              className="input min-h-20 py-2"
              value={values.description}
              onChange={set("description")}
              maxLength={500}
            />
          </Field>
        </div>
      </fieldset>

      <fieldset className="grid grid-cols-1 gap-4 sm:grid-cols-3">
        <legend className="mb-2 text-base font-bold">Strengths</legend>
        {input("design", { label: "Design strength", unit: sUnit })}
        {input("strip", { label: "Strip strength", unit: sUnit })}
        {input("ship", { label: "Ship strength", unit: sUnit })}
        <p className="hint sm:col-span-3">
          Strip and ship strengths come from the piece's design and the engineer of record. Plinth
          compares each pour's estimate with them; the release stays QC's decision.
        </p>
      </fieldset>

      <fieldset className="grid grid-cols-1 gap-4 sm:grid-cols-2">
        <legend className="mb-2 text-base font-bold">Maturity</legend>
        {input("datum", {
          label: "Datum temperature",
          unit: tUnit,
          hint: "Below it no strength is gained. −10 °C (14 °F) is common; best is the mix's own, found by ASTM C1074 Appendix X1.",
        })}
        {input("activation", {
          label: "Activation energy",
          unit: "kJ/mol",
          hint: "For equivalent age. About 33 to 45 kJ/mol for portland cement, more with slag; 41.57 is Q = 5000 K.",
        })}
        {mix && (
          <p className="hint sm:col-span-2" role="note">
            Changing either recomputes the maturity of the stored breaks and of this mix's open
            pours. Fit the calibration again afterwards: the current curve was fitted at the old
            values.
          </p>
        )}
      </fieldset>

      <fieldset className="grid grid-cols-1 gap-4 sm:grid-cols-2">
        <legend className="mb-2 text-base font-bold">Target placing temperature</legend>
        {input("placing_min", { label: "Lowest", unit: tUnit })}
        {input("placing_max", { label: "Highest", unit: tUnit })}
      </fieldset>

      <fieldset className="grid grid-cols-1 gap-4 sm:grid-cols-3">
        <legend className="mb-2 text-base font-bold">
          Batch proportions per {units === "us" ? "cubic yard" : "cubic metre"}
        </legend>
        {input("cement", { label: "Cement", unit: pUnit })}
        {input("scm", { label: "Slag, fly ash and other SCM", unit: pUnit })}
        {input("water", { label: "Water", unit: pUnit })}
        {input("fine", { label: "Fine aggregate (SSD)", unit: pUnit })}
        {input("coarse", { label: "Coarse aggregate (SSD)", unit: pUnit })}
        <div />
        {input("fine_moisture", { label: "Fine aggregate moisture", unit: "%" })}
        {input("coarse_moisture", { label: "Coarse aggregate moisture", unit: "%" })}
      </fieldset>

      {message && (
        <p
          role={message.tone === "error" ? "alert" : "status"}
          className={`rounded-md px-3 py-2 text-sm font-semibold ${message.tone === "error" ? "bg-alarm-bg text-alarm" : "bg-ok-bg text-ok"}`}
        >
          {message.text}
        </p>
      )}
      <div className="flex flex-wrap gap-2">
        <button type="submit" className="btn btn-primary" disabled={busy}>
          {busy ? "Saving…" : mix ? "Save changes" : "Add the mix"}
        </button>
        {mix && (
          <button
            type="button"
            className="btn btn-quiet"
            onClick={() => {
              setValues(start);
              setErrors({});
              setMessage(null);
            }}
          >
            Undo changes
          </button>
        )}
      </div>
    </form>
  );
}
