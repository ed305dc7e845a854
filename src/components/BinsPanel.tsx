import { useEffect, useMemo, useState } from "react";
import {
  BATCH_CAUTION,
  DEFAULT_CEMENT_TEMP_C,
  DEFAULT_WATER_TEMP_C,
  adviceText,
  aggregateTemps,
  binReporting,
  missingMixFields,
  noteText,
  planBatch,
  requiredMixFields,
  type AggregateClass,
  type BatchPlan,
  type BinInput,
  type Formatters,
  type MixProportions,
  type PlacingState,
} from "@/domain/batchTemperature";
import { formatDuration } from "@/domain/sensorState";
import { cToF, displayTemp, fToC, kgM3ToLbYd3, type UnitSystem } from "@/domain/units";
import Field from "./Field";
import Sparkline from "./Sparkline";

export interface BinTile extends BinInput {
  label: string | null;
  material: string | null;
  spark: [number, number][];
}

export interface BatchMix extends MixProportions {
  id: number;
  name: string;
}

interface Props {
  bins: BinTile[];
  mixes: BatchMix[];
  initialMixId: number | null;
  units: UnitSystem;
  nowMs: number;
}

interface LiveReading {
  sensor: string;
  ts: number;
  temp_c: number;
  latest: boolean;
}

const SPARK_WINDOW_MS = 12 * 3_600_000;
const SAVED_KEY = "plinth.bins.temps";

const stateLook: Record<PlacingState, { word: string; mark: string; tone: string }> = {
  in_range: { word: "In range", mark: "●", tone: "bg-ok-bg text-ok" },
  too_cold: { word: "Too cold", mark: "■", tone: "bg-alarm-bg text-alarm" },
  too_hot: { word: "Too hot", mark: "■", tone: "bg-alarm-bg text-alarm" },
};
const classWords: Record<AggregateClass, string> = { fine: "Fine", coarse: "Coarse" };

/** A temperature typed in the user's units, as °C, or an error message. */
function readTemp(
  text: string,
  units: UnitSystem,
  minC: number,
  maxC: number,
): { c: number } | { error: string } {
  const v = Number(text.replace(",", "."));
  if (text.trim() === "" || !Number.isFinite(v)) return { error: "Enter a number." };
  const c = units === "us" ? fToC(v) : v;
  if (c < minC || c > maxC) {
    const lo = displayTemp(minC, units, 0);
    const hi = displayTemp(maxC, units, 0);
    return { error: `Between ${lo.value} and ${hi.value} ${hi.unit}.` };
  }
  return { c };
}
const inUnits = (c: number, units: UnitSystem) =>
  String(Math.round((units === "us" ? cToF(c) : c) * 10) / 10);

/**
 * The bins page: each aggregate bin's temperature live, and for a chosen mix the next batch's
 * temperature by the heat balance, with the mixing-water temperature or ice that brings it into
 * the placing range. Computed here in the browser with the same pure code as GET /api/v1/bins,
 * so it follows every reading and every keystroke without a round trip.
 */
export default function BinsPanel({ bins: initialBins, mixes, initialMixId, units, nowMs }: Props) {
  const [bins, setBins] = useState(initialBins);
  const [now, setNow] = useState(nowMs);
  const [link, setLink] = useState<"connecting" | "live" | "retrying">("connecting");
  const [mixId, setMixId] = useState<number | null>(initialMixId);
  const [waterText, setWaterText] = useState(inUnits(DEFAULT_WATER_TEMP_C, units));
  const [cementText, setCementText] = useState(inUnits(DEFAULT_CEMENT_TEMP_C, units));
  const [chosen, setChosen] = useState<string[] | null>(null);
  const [fineText, setFineText] = useState("");
  const [coarseText, setCoarseText] = useState("");

  // The water and cement temperatures entered last on this device, kept in °C across visits:
  // they change over a shift, not between page loads.
  useEffect(() => {
    try {
      const saved = JSON.parse(localStorage.getItem(SAVED_KEY) ?? "null") as {
        waterC?: unknown;
        cementC?: unknown;
      } | null;
      if (typeof saved?.waterC === "number") setWaterText(inUnits(saved.waterC, units));
      if (typeof saved?.cementC === "number") setCementText(inUnits(saved.cementC, units));
    } catch {
      // nothing saved, or storage refused: the defaults stand
    }
  }, [units]);

  useEffect(() => {
    const es = new EventSource("/api/v1/live");
    es.addEventListener("open", () => setLink("live"));
    es.addEventListener("error", () => setLink("retrying"));
    es.addEventListener("readings", (ev) => {
      const batch = JSON.parse((ev as MessageEvent<string>).data) as LiveReading[];
      setBins((prev) =>
        prev.map((b) => {
          const rs = batch.filter((r) => r.sensor === b.id);
          if (rs.length === 0) return b;
          let next = b;
          for (const r of rs)
            if (r.latest && (next.lastSeenAtMs === null || r.ts >= next.lastSeenAtMs))
              next = { ...next, tempC: r.temp_c, lastSeenAtMs: r.ts };
          const spark = [...next.spark, ...rs.map((r) => [r.ts, r.temp_c] as [number, number])]
            .sort((p, q) => p[0] - q[0])
            .filter((p) => p[0] >= Date.now() - SPARK_WINDOW_MS);
          return { ...next, spark };
        }),
      );
    });
    const tick = setInterval(() => setNow(Date.now()), 5_000);
    return () => {
      es.close();
      clearInterval(tick);
    };
  }, []);

  const mix = mixes.find((m) => m.id === mixId) ?? null;
  const water = readTemp(waterText, units, 0, 100);
  const cement = readTemp(cementText, units, -30, 90);
  const fineHand = fineText.trim() === "" ? null : readTemp(fineText, units, -40, 80);
  const coarseHand = coarseText.trim() === "" ? null : readTemp(coarseText, units, -40, 80);

  const fineHandC = fineHand && "c" in fineHand ? fineHand.c : null;
  const coarseHandC = coarseHand && "c" in coarseHand ? coarseHand.c : null;
  const agg = useMemo(
    () => aggregateTemps(bins, now, { chosen, enteredC: { fine: fineHandC, coarse: coarseHandC } }),
    [bins, now, chosen, fineHandC, coarseHandC],
  );
  const used = new Set([...agg.fine.binIds, ...agg.coarse.binIds]);

  const t = (c: number, digits = 1) => {
    const d = displayTemp(c, units, digits);
    return `${d.value} ${d.unit}`;
  };
  /** In running text: one decimal, without a trailing ".0" (50 °F, 89.6 °F). */
  const tt = (c: number) => t(c, 1).replace(/\.0 /, " ");
  const mass = (kg: number) =>
    units === "us" ? `${Math.round(kgM3ToLbYd3(kg))} lb/yd³` : `${Math.round(kg)} kg/m³`;
  const fmt: Formatters = { temp: tt, mass };
  /** Limits in notes are round figures: 140 °F, 32 °F. */
  const noteFmt: Formatters = { temp: (c) => t(c, 0), mass };

  const missing = mix ? missingMixFields(mix) : [];
  const needs: AggregateClass[] = mix
    ? (["fine", "coarse"] as const).filter(
        (c) => ((c === "fine" ? mix.fineAggKgM3 : mix.coarseAggKgM3) ?? 0) > 0,
      )
    : [];
  const lacking = missing.length === 0 ? needs.filter((c) => agg[c].tempC === null) : [];
  let plan: BatchPlan | null = null;
  if (mix && missing.length === 0 && lacking.length === 0 && "c" in water && "c" in cement) {
    const fineC = agg.fine.tempC ?? (agg.coarse.tempC as number);
    plan = planBatch(
      mix,
      { fineC, coarseC: agg.coarse.tempC ?? fineC, cementC: cement.c },
      water.c,
    );
  }

  function enter(which: "water" | "cement", text: string) {
    (which === "water" ? setWaterText : setCementText)(text);
    const read = readTemp(text, units, which === "water" ? 0 : -30, which === "water" ? 100 : 90);
    if (!("c" in read)) return;
    try {
      const saved = JSON.parse(localStorage.getItem(SAVED_KEY) ?? "{}") as Record<string, number>;
      localStorage.setItem(SAVED_KEY, JSON.stringify({ ...saved, [`${which}C`]: read.c }));
    } catch {
      // storage refused (private mode): the value still holds for this visit
    }
  }

  function chooseMix(id: number) {
    setMixId(id);
    const u = new URL(window.location.href);
    u.searchParams.set("mix", String(id));
    window.history.replaceState(null, "", u);
  }

  function toggleBin(id: string, on: boolean) {
    const all = bins.filter((b) => b.aggregate !== null).map((b) => b.id);
    const current = chosen ?? all;
    const next = on ? [...new Set([...current, id])] : current.filter((x) => x !== id);
    setChosen(next.length === all.length && all.every((x) => next.includes(x)) ? null : next);
  }

  const unit = units === "us" ? "°F" : "°C";
  const flagged =
    plan?.advice.action === "cannot_reach" || plan?.advice.action === "no_mixing_water";
  const heading = !plan
    ? ""
    : plan.advice.action === "no_mixing_water"
      ? "Check the moisture figures"
      : flagged
        ? "Cannot reach the range"
        : plan.advice.action === "water_at_heating_limit"
          ? "Water at its limit"
          : plan.advice.action === "ice" && !plan.advice.aimsForMiddle
            ? "Only the top of the range"
            : plan.notes.includes("ice_share_over_half")
              ? "Heavy on ice"
              : "To hit the middle";
  const stretched = !flagged && heading !== "To hit the middle";

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,3fr)_minmax(0,2fr)] lg:items-start">
      <section aria-labelledby="batch-h" className="card p-4 sm:p-5">
        <h2 id="batch-h" className="text-lg font-bold">
          Next batch
        </h2>
        <div className="mt-3 grid grid-cols-2 gap-3 sm:grid-cols-3">
          <div className="col-span-2 sm:col-span-1">
            <Field id="mix" label="Mix">
              <select
                id="mix"
                className="input"
                value={mixId ?? ""}
                onChange={(e) => chooseMix(Number(e.target.value))}
              >
                {mixId === null && <option value="">Choose a mix</option>}
                {mixes.map((m) => (
                  <option key={m.id} value={m.id}>
                    {m.name}
                  </option>
                ))}
              </select>
            </Field>
          </div>
          <Field
            id="water-temp"
            label={`Mixing water (${unit})`}
            hint={`Starts at ${inUnits(DEFAULT_WATER_TEMP_C, units)} ${unit}: enter your reading.`}
            error={"error" in water ? water.error : undefined}
          >
            <input
              id="water-temp"
              className="input figure"
              inputMode="decimal"
              autoComplete="off"
              value={waterText}
              aria-invalid={"error" in water}
              aria-describedby={"error" in water ? "water-temp-err" : undefined}
              onChange={(e) => enter("water", e.target.value)}
            />
          </Field>
          <Field
            id="cement-temp"
            label={`Cement (${unit})`}
            hint={`Starts at ${inUnits(DEFAULT_CEMENT_TEMP_C, units)} ${unit}: enter the silo's.`}
            error={"error" in cement ? cement.error : undefined}
          >
            <input
              id="cement-temp"
              className="input figure"
              inputMode="decimal"
              autoComplete="off"
              value={cementText}
              aria-invalid={"error" in cement}
              aria-describedby={"error" in cement ? "cement-temp-err" : undefined}
              onChange={(e) => enter("cement", e.target.value)}
            />
          </Field>
        </div>

        {mixes.length === 0 && (
          <p className="mt-4 rounded-lg bg-surface-2 p-3">
            There are no mixes yet. QC adds them on the Mixes page.
          </p>
        )}

        {mix && missing.length > 0 && (
          <div className="mt-4 rounded-lg bg-warn-bg p-3 text-warn" data-testid="mix-incomplete">
            <p className="font-bold">
              <span aria-hidden="true">▲ </span>
              {mix.name} has no proportions to predict a batch from.
            </p>
            <p className="mt-1 text-ink">
              Fill in on the mix: {missing.map((f) => requiredMixFields[f]).join(", ")}; the
              aggregates' moisture too, if known.{" "}
              <a className="font-semibold text-accent underline" href={`/mixes/${mix.id}`}>
                Open {mix.name}
              </a>
            </p>
          </div>
        )}

        {mix && missing.length === 0 && lacking.length > 0 && (
          <p className="mt-4 rounded-lg bg-warn-bg p-3 font-semibold text-warn">
            <span aria-hidden="true">▲ </span>
            No reporting {lacking.join(" or ")} aggregate bin. Check the bin sensors, or enter a
            temperature measured by hand below.
          </p>
        )}

        {plan && (
          <div className="mt-4" data-testid="prediction" data-state={plan.state}>
            <div className="flex flex-wrap items-end gap-x-4 gap-y-2">
              <div>
                <p className="text-sm font-semibold text-muted">Concrete out of the mixer</p>
                <p className="figure text-5xl font-bold leading-none" data-testid="predicted-temp">
                  {t(plan.predictedC)}
                </p>
              </div>
              <p
                className={`rounded-full px-3 py-1 text-base font-bold ${stateLook[plan.state].tone}`}
                data-testid="placing-state"
              >
                <span aria-hidden="true">{stateLook[plan.state].mark} </span>
                {stateLook[plan.state].word}
              </p>
            </div>
            <p className="mt-2 text-sm text-muted">
              Placing range {tt(plan.minC)} to {tt(plan.maxC)}; aiming for {tt(plan.targetC)}. With
              water at {tt(plan.waterTempC)}, no ice.
            </p>

            <div
              className={`mt-4 rounded-lg border-l-[6px] p-3 ${
                flagged
                  ? "border-l-alarm bg-alarm-bg"
                  : stretched
                    ? "border-l-warn bg-warn-bg"
                    : "border-l-accent bg-info-bg"
              }`}
              data-testid="advice"
              data-action={plan.advice.action}
            >
              <p className="text-sm font-bold">
                <span aria-hidden="true">{flagged ? "■ " : stretched ? "▲ " : "◆ "}</span>
                {heading}
              </p>
              <AdviceFigures plan={plan} t={t} mass={fmt.mass} />
              <p className="mt-2">{adviceText(plan, fmt)}</p>
            </div>

            {plan.notes.length > 0 && (
              <ul className="mt-3 grid gap-1 text-sm">
                {plan.notes.map((n) => (
                  <li key={n} className="flex gap-2">
                    <span aria-hidden="true" className="text-warn">
                      ▲
                    </span>
                    <span>{noteText(n, noteFmt)}</span>
                  </li>
                ))}
              </ul>
            )}

            <p className="mt-3 text-sm text-muted">
              Aggregates used:{" "}
              {(["fine", "coarse"] as const).map((c, i) => (
                <span key={c}>
                  {i > 0 && " · "}
                  {classWords[c]}{" "}
                  {agg[c].tempC === null ? (
                    "none"
                  ) : (
                    <span className="figure font-semibold text-ink">{tt(agg[c].tempC)}</span>
                  )}
                  {agg[c].source === "bins" && ` (${agg[c].binIds.join(", ")})`}
                  {agg[c].source === "entered" && " (measured by hand)"}
                </span>
              ))}
              . Water to add {fmt.mass(plan.masses.addedWaterKg)}, after{" "}
              {fmt.mass(plan.masses.fineFreeWaterKg + plan.masses.coarseFreeWaterKg)} of free water
              on the aggregates.
            </p>
          </div>
        )}

        <p className="mt-4 rounded-lg bg-surface-2 p-3 text-sm" data-testid="caution">
          <span className="font-bold">Caution. </span>
          {BATCH_CAUTION}
        </p>
      </section>

      <section aria-labelledby="bins-h">
        <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
          <h2 id="bins-h" className="text-lg font-bold">
            Aggregate bins
          </h2>
          <p
            role="status"
            aria-live="polite"
            className={`rounded-full px-3 py-1 text-sm font-bold ${link === "live" ? "bg-ok-bg text-ok" : "bg-warn-bg text-warn"}`}
          >
            <span aria-hidden="true">{link === "live" ? "● " : "◌ "}</span>
            {link === "live" ? "Live" : link === "connecting" ? "Connecting…" : "Reconnecting…"}
          </p>
        </div>
        {bins.length === 0 && (
          <p className="card p-4 text-muted">
            No aggregate-bin sensors yet. A manager sets a sensor's kind to “bin” on the Sensors
            page.
          </p>
        )}
        <ul className="grid grid-cols-2 gap-2">
          {bins.map((b) => {
            const reporting = binReporting(b, now);
            const temp = b.tempC === null ? null : displayTemp(b.tempC, units);
            const frozen = reporting && b.tempC !== null && b.tempC <= 0;
            const look = !reporting
              ? {
                  band: "border-l-alarm",
                  tone: "bg-alarm-bg text-alarm",
                  mark: "✕",
                  word: "Silent",
                }
              : frozen
                ? { band: "border-l-warn", tone: "bg-warn-bg text-warn", mark: "▲", word: "Frozen" }
                : { band: "border-l-ok", tone: "bg-ok-bg text-ok", mark: "●", word: "Reporting" };
            const isUsed = used.has(b.id);
            return (
              <li
                key={b.id}
                data-bin={b.id}
                data-used={isUsed}
                className={`card border-l-[6px] p-3 ${look.band}`}
              >
                <div className="flex items-start justify-between gap-1">
                  <a
                    href={`/sensors/${encodeURIComponent(b.id)}`}
                    className="figure text-sm font-bold text-accent underline"
                  >
                    {b.id}
                  </a>
                  <span className={`rounded-full px-2 py-0.5 text-xs font-bold ${look.tone}`}>
                    <span aria-hidden="true">{look.mark} </span>
                    {look.word}
                  </span>
                </div>
                <p className="figure mt-1 text-3xl font-bold leading-tight" data-testid="bin-temp">
                  {temp ? temp.value : "—"}
                  <span className="text-base font-semibold text-muted"> {temp?.unit}</span>
                </p>
                <p className="truncate text-xs text-muted">
                  {b.aggregate ? classWords[b.aggregate] : "Not an aggregate"}
                  {b.label ? ` · ${b.label}` : ""}
                </p>
                <div className="my-1 text-accent">
                  <Sparkline
                    points={b.spark}
                    height={28}
                    label={`${b.id}, temperature over the last 12 hours`}
                  />
                </div>
                <p className="text-xs text-muted">
                  {b.lastSeenAtMs === null
                    ? "No reading yet"
                    : `${formatDuration(now - b.lastSeenAtMs)} ago`}
                </p>
                {b.aggregate && (
                  <label className="mt-1 flex min-h-11 items-center gap-2 text-sm font-semibold">
                    <input
                      type="checkbox"
                      className="h-5 w-5"
                      checked={chosen === null ? true : chosen.includes(b.id)}
                      onChange={(e) => toggleBin(b.id, e.target.checked)}
                    />
                    Use for the batch
                    {!reporting && (chosen === null || chosen.includes(b.id)) && (
                      <span className="font-normal text-muted">(left out while silent)</span>
                    )}
                  </label>
                )}
              </li>
            );
          })}
        </ul>

        <details className="card mt-3 p-3">
          <summary className="min-h-11 cursor-pointer py-2 font-semibold">
            Aggregate measured by hand
          </summary>
          <p className="hint mb-2">
            A temperature entered here stands in for that aggregate's bins. Leave it empty to use
            the bins.
          </p>
          <div className="grid grid-cols-2 gap-3">
            <Field
              id="fine-hand"
              label={`Fine (${unit})`}
              error={fineHand && "error" in fineHand ? fineHand.error : undefined}
            >
              <input
                id="fine-hand"
                className="input figure"
                inputMode="decimal"
                autoComplete="off"
                value={fineText}
                aria-invalid={!!fineHand && "error" in fineHand}
                onChange={(e) => setFineText(e.target.value)}
              />
            </Field>
            <Field
              id="coarse-hand"
              label={`Coarse (${unit})`}
              error={coarseHand && "error" in coarseHand ? coarseHand.error : undefined}
            >
              <input
                id="coarse-hand"
                className="input figure"
                inputMode="decimal"
                autoComplete="off"
                value={coarseText}
                aria-invalid={!!coarseHand && "error" in coarseHand}
                onChange={(e) => setCoarseText(e.target.value)}
              />
            </Field>
          </div>
        </details>
      </section>
    </div>
  );
}

/** The one or two numbers the batch-plant operator sets: water temperature, ice. */
function AdviceFigures({
  plan,
  t,
  mass,
}: {
  plan: BatchPlan;
  t: (c: number, digits?: number) => string;
  mass: (kg: number) => string;
}) {
  const a = plan.advice;
  const figures: { label: string; value: string; id: string }[] = [];
  if (a.action === "water" || a.action === "water_at_heating_limit")
    figures.push({ label: "Mixing water", value: t(a.waterTempC, 0), id: "advice-water" });
  if (a.action === "ice") {
    figures.push({ label: "Ice", value: mass(a.iceKg), id: "advice-ice" });
    figures.push({ label: "Rest of the water", value: t(a.waterTempC, 0), id: "advice-water" });
  }
  if (a.action === "cannot_reach")
    figures.push({ label: "Best it can do", value: t(a.bestC, 1), id: "advice-best" });
  if (figures.length === 0) return null;
  return (
    <dl className="mt-2 flex flex-wrap gap-x-6 gap-y-1">
      {figures.map((f) => (
        <div key={f.id}>
          <dt className="text-xs font-semibold text-muted">{f.label}</dt>
          <dd className="figure text-3xl font-bold" data-testid={f.id}>
            {f.value}
          </dd>
        </div>
      ))}
    </dl>
  );
}
