import { useEffect, useMemo, useState, type SubmitEvent } from "react";
import { roleLabels } from "@/lib/access";
import {
  daySegments,
  formatClockTime,
  nextChange,
  localClock,
  parseClockTime,
  weekdaysToMask,
  type ShiftWindow,
} from "@/domain/alerts/oncall";
import { readProblem } from "@/lib/format";
import { MAX_ESCALATION_ORDER, onCallCreateBody } from "@/lib/schemas/onCall";
import type {
  OnCallPersonJson,
  RotaCandidate,
  RotaJson,
  ShiftJson,
} from "@/lib/server/db/queries/onCall";
import Field from "./Field";

interface Props {
  initial: RotaJson;
  /** Managers edit the rota; everyone else reads it. */
  canEdit: boolean;
  /** Who a manager may put on the rota (empty for everyone else). */
  people: RotaCandidate[];
  meId: number;
}

const DAY_NAMES = [
  "Sunday",
  "Monday",
  "Tuesday",
  "Wednesday",
  "Thursday",
  "Friday",
  "Saturday",
] as const;
const DAY_SHORT = ["Sun", "Mon", "Tue", "Wed", "Thu", "Fri", "Sat"] as const;
const ORDINALS = ["1st", "2nd", "3rd", "4th", "5th", "6th", "7th", "8th", "9th", "10th"];
const NTH = ["first", "second", "third", "fourth", "fifth", "sixth", "seventh", "eighth", "ninth"];

/** "1st: told first", "2nd: first escalation", ... */
function orderLabel(order: number): string {
  if (order === 0) return "1st: told first";
  return `${ORDINALS[order] ?? `${order + 1}th`}: ${NTH[order - 1] ?? `${order}th`} escalation`;
}

/** The form's input for each field of the body, for focus and error ids. */
const FIELD_IDS: Record<string, string> = {
  user_id: "shift-person",
  name: "shift-name",
  weekdays: "shift-weekdays",
  start: "shift-start",
  end: "shift-end",
  escalation_order: "shift-escalation-order",
};

/** "Every day", "Mon–Fri", "Sat, Sun", "Mon, Wed, Fri". */
function daysLabel(days: number[]): string {
  const set = new Set(days);
  if (set.size === 7) return "Every day";
  if (set.size === 5 && [1, 2, 3, 4, 5].every((d) => set.has(d))) return "Mon–Fri";
  if (set.size === 2 && set.has(0) && set.has(6)) return "Sat, Sun";
  return [1, 2, 3, 4, 5, 6, 0]
    .filter((d) => set.has(d))
    .map((d) => DAY_SHORT[d])
    .join(", ");
}

function hoursLabel(s: Pick<ShiftJson, "start" | "end">): string {
  if (s.start === s.end) return "All day";
  return s.start > s.end ? `${s.start} – ${s.end} next day` : `${s.start} – ${s.end}`;
}

const toWindow = (s: ShiftJson): ShiftWindow & { json: ShiftJson } => ({
  id: s.id,
  userId: s.user_id,
  weekdays: weekdaysToMask(s.weekdays),
  startMinute: parseClockTime(s.start) ?? 0,
  endMinute: parseClockTime(s.end) ?? 0,
  escalationOrder: s.escalation_order,
  json: s,
});

/** "22:00", "2200", "22", "6:30", "630" -> "HH:MM"; anything else as typed. */
function normaliseClock(text: string): string {
  const t = text.trim();
  const m = /^([0-9]{1,2}):?([0-9]{2})?$/.exec(t);
  if (!m) return t;
  let h = m[1]!;
  let min = m[2] ?? "00";
  // "630" reads as 6:30, not 63:0.
  if (!t.includes(":") && t.length === 3) {
    h = t.slice(0, 1);
    min = t.slice(1);
  }
  const out = `${h.padStart(2, "0")}:${min}`;
  return parseClockTime(out) === null ? t : out;
}

/** How alerts reach a person, in words, with a mark so it never rests on colour. */
function Channels({
  p,
  masked,
}: {
  p: Pick<OnCallPersonJson, "has_phone" | "sms" | "email">;
  masked?: string | null;
}) {
  const texts = p.sms && p.has_phone;
  return (
    <span className="flex flex-wrap gap-1.5 text-xs font-semibold">
      <span
        className={`inline-flex items-center gap-1 rounded-full px-2 py-0.5 ${texts ? "bg-ok-bg text-ok" : "bg-warn-bg text-warn"}`}
      >
        <span aria-hidden="true">{texts ? "●" : "▲"}</span>
        {texts
          ? `Texts${masked ? ` to ${masked}` : ""}`
          : p.has_phone
            ? "Texts off"
            : "No phone number"}
      </span>
      <span
        className={`inline-flex items-center gap-1 rounded-full px-2 py-0.5 ${p.email ? "bg-surface-2" : "bg-warn-bg text-warn"}`}
      >
        <span aria-hidden="true">{p.email ? "●" : "▲"}</span>
        {p.email ? "E-mail" : "E-mail off"}
      </span>
    </span>
  );
}

/** A person who cannot be reached the way the rota expects, for the form's warning. */
function candidateWarning(p: RotaCandidate | undefined): string | null {
  if (!p) return null;
  if (!p.sms && !p.email)
    return `${p.name} has turned off both texts and e-mails: alerts will not reach them.`;
  if (!p.sms) return `${p.name} has texts turned off: alerts will go by e-mail only.`;
  if (!p.has_phone && !p.email)
    return `${p.name} has no phone number and e-mails turned off: alerts will not reach them.`;
  if (!p.has_phone)
    return `${p.name} has no phone number: texts will go by e-mail. Add one on the Team page.`;
  return null;
}

interface Draft {
  name: string;
  user_id: string;
  days: number[];
  start: string;
  end: string;
  escalation_order: string;
}
const emptyDraft: Draft = {
  name: "",
  user_id: "",
  days: [0, 1, 2, 3, 4, 5, 6],
  start: "",
  end: "",
  escalation_order: "0",
};

/** The on-call rota: who is on call now and until when, the week by day, and (for managers) its shifts. */
export default function OnCallRota({ initial, canEdit, people, meId }: Props) {
  const [rota, setRota] = useState(initial);
  // A save answers beside the form; a removal beside the list, where it was clicked.
  const [notice, setNotice] = useState<{
    tone: "ok" | "error";
    text: string;
    where: "form" | "list";
  } | null>(null);
  const [draft, setDraft] = useState<Draft>(emptyDraft);
  const [editing, setEditing] = useState<ShiftJson | null>(null);
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [busy, setBusy] = useState(false);
  const tz = rota.time_zone;

  async function refresh() {
    const res = await fetch("/api/v1/on-call");
    if (res.ok) setRota((await res.json()) as RotaJson);
  }

  // Keep "now" current: every minute, and at the moment it is due to change.
  useEffect(() => {
    const tick = setInterval(() => void refresh(), 60_000);
    const untilMs = rota.now.until ? Date.parse(rota.now.until) - Date.now() : null;
    const turn =
      untilMs !== null && untilMs < 2 ** 31 - 1
        ? setTimeout(() => void refresh(), Math.max(1_000, untilMs + 1_000))
        : null;
    return () => {
      clearInterval(tick);
      if (turn) clearTimeout(turn);
    };
  }, [rota.now.until]);

  const nowMs = Date.parse(rota.now.at);
  const today = localClock(nowMs, tz).weekday;
  const windows = useMemo(() => rota.shifts.filter((s) => s.active).map(toWindow), [rota.shifts]);
  const week = useMemo(
    () =>
      [0, 1, 2, 3, 4, 5, 6].map((i) => {
        const weekday = (today + i) % 7;
        return { weekday, i, segments: daySegments(windows, weekday) };
      }),
    [windows, today],
  );

  function untilText(ms: number): string {
    const c = localClock(ms, tz);
    const days = Math.round((ms - nowMs) / 86_400_000);
    const time = formatClockTime(c.minute);
    if (c.weekday === today && ms - nowMs < 86_400_000) return `until ${time} today`;
    if (c.weekday === (today + 1) % 7 && days <= 1) return `until ${time} tomorrow`;
    return `until ${DAY_NAMES[c.weekday]} ${time}`;
  }

  const first = rota.now.on_call[0];
  const escalation = rota.now.on_call.slice(1);
  // The headline's "until" is when someone else is told first; the whole order may change sooner.
  const firstChange = useMemo(
    () => nextChange(windows, nowMs, tz, { firstOnly: true }),
    [windows, nowMs, tz],
  );
  const takesOver = firstChange?.onCall[0]?.json.user_name ?? null;
  const chosen = people.find((p) => String(p.id) === draft.user_id);
  const chosenWarning = candidateWarning(chosen);

  function startEdit(s: ShiftJson) {
    setEditing(s);
    setErrors({});
    setNotice(null);
    setDraft({
      name: s.name,
      user_id: String(s.user_id),
      days: s.weekdays,
      start: s.start,
      end: s.end,
      escalation_order: String(s.escalation_order),
    });
    // Bring the form's heading into view, then put the cursor on its first field.
    document.getElementById("edit-heading")?.scrollIntoView({ block: "start" });
    setTimeout(() => document.getElementById("shift-person")?.focus({ preventScroll: true }), 0);
  }

  function cancelEdit() {
    setEditing(null);
    setDraft(emptyDraft);
    setErrors({});
  }

  async function save(e: SubmitEvent) {
    e.preventDefault();
    const start = normaliseClock(draft.start);
    const end = normaliseClock(draft.end);
    setDraft((d) => ({ ...d, start, end }));
    const body = {
      name: draft.name,
      user_id: draft.user_id === "" ? undefined : Number(draft.user_id),
      weekdays: draft.days,
      start,
      end,
      escalation_order: Number(draft.escalation_order),
    };
    const checked = onCallCreateBody.safeParse(body);
    if (!checked.success) {
      const fields: Record<string, string> = {};
      for (const i of checked.error.issues) fields[String(i.path[0] ?? "")] ??= i.message;
      setErrors(fields);
      setNotice({ tone: "error", text: "Some fields need attention.", where: "form" });
      const firstBad = Object.keys(FIELD_IDS).find((f) => fields[f]);
      if (firstBad) document.getElementById(FIELD_IDS[firstBad]!)?.focus();
      return;
    }
    setBusy(true);
    const res = await fetch(editing ? `/api/v1/on-call/${editing.id}` : "/api/v1/on-call", {
      method: editing ? "PATCH" : "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(checked.data),
    });
    setBusy(false);
    if (!res.ok) {
      const p = await readProblem(res);
      setErrors(p.fields);
      setNotice({ tone: "error", text: p.message, where: "form" });
      return;
    }
    const saved = (await res.json()) as ShiftJson & { warnings: string[] };
    const what = `${saved.name || "Shift"} for ${saved.user_name}: ${daysLabel(saved.weekdays)}, ${hoursLabel(saved)}`;
    setNotice({
      tone: "ok",
      text: `${editing ? "Saved" : "Added"}. ${what}.${saved.warnings.length ? ` ${saved.warnings.join(" ")}` : ""}`,
      where: "form",
    });
    setEditing(null);
    setDraft(emptyDraft);
    setErrors({});
    await refresh();
  }

  async function remove(s: ShiftJson) {
    if (
      !window.confirm(
        `Remove ${s.name || "this shift"} (${s.user_name}, ${daysLabel(s.weekdays)} ${hoursLabel(s)}) from the rota?`,
      )
    )
      return;
    setBusy(true);
    const res = await fetch(`/api/v1/on-call/${s.id}`, { method: "DELETE" });
    setBusy(false);
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message, where: "list" });
      return;
    }
    if (editing?.id === s.id) cancelEdit();
    setNotice({
      tone: "ok",
      text: `Removed ${s.name || "the shift"} of ${s.user_name}.`,
      where: "list",
    });
    await refresh();
  }

  const allDays = draft.days.length === 7;
  const toggleDay = (d: number) =>
    setDraft((x) => ({
      ...x,
      days: x.days.includes(d) ? x.days.filter((y) => y !== d) : [...x.days, d].sort(),
    }));
  const err = (f: string) => errors[f];
  const describe = (f: string, hint?: string) =>
    [errors[f] ? `${FIELD_IDS[f]}-err` : "", hint ?? ""].filter(Boolean).join(" ") || undefined;
  const startMin = parseClockTime(normaliseClock(draft.start));
  const endMin = parseClockTime(normaliseClock(draft.end));
  const shape =
    startMin === null || endMin === null
      ? null
      : startMin === endMin
        ? "Same start and end: the whole of each chosen day."
        : startMin > endMin
          ? `Runs past midnight: from ${formatClockTime(startMin)} on each chosen day to ${formatClockTime(endMin)} the next morning.`
          : null;

  return (
    <div className="grid gap-6">
      <section
        aria-labelledby="now-heading"
        className={`card border-l-8 p-4 sm:p-6 ${first ? "border-l-accent" : "border-l-warn"}`}
        data-testid="on-call-now"
      >
        <h2 id="now-heading" className="text-sm font-bold tracking-wide text-muted uppercase">
          On call now
        </h2>
        {first ? (
          <>
            <p className="mt-1 text-3xl leading-tight font-extrabold sm:text-5xl">
              {first.name}
              {first.user_id === meId && (
                <span className="ml-2 align-middle text-base font-bold text-accent">(you)</span>
              )}
            </p>
            <p className="mt-1 text-lg text-muted">
              {roleLabels[first.role]}
              {first.shift_name && ` · ${first.shift_name}`}
            </p>
            <p className="mt-2 text-2xl font-bold sm:text-3xl" data-testid="on-call-until">
              {firstChange ? untilText(firstChange.atMs) : "on call all week"}
              {firstChange && (
                <span className="block text-base font-semibold text-muted sm:text-lg">
                  then {takesOver ?? "nobody is on call"}
                </span>
              )}
            </p>
            <div className="mt-3">
              <Channels p={first} />
            </div>
          </>
        ) : (
          <>
            <p className="mt-1 text-3xl leading-tight font-extrabold text-warn sm:text-5xl">
              <span aria-hidden="true">▲ </span>Nobody is on call
            </p>
            <p className="mt-2 text-2xl font-bold" data-testid="on-call-until">
              {firstChange && takesOver
                ? `${untilText(firstChange.atMs)}, when ${takesOver} comes on`
                : "No shift covers the coming week."}
            </p>
            <p className="mt-1 text-lg text-muted">Until someone is, alerts go to the managers.</p>
          </>
        )}
        {first && (
          <div className="mt-5 border-t border-line pt-4">
            <h3 className="font-bold">If nobody acknowledges an alert in time</h3>
            <ol className="mt-2 grid gap-2">
              {escalation.map((p, i) => (
                <li key={p.user_id} className="flex items-baseline gap-3">
                  <span className="figure w-8 shrink-0 text-muted">{i + 2}.</span>
                  <div className="grid gap-1">
                    <p className="flex flex-wrap items-baseline gap-x-3">
                      <span className="text-xl font-bold">{p.name}</span>
                      <span className="text-sm text-muted">
                        {roleLabels[p.role]}
                        {p.shift_name && ` · ${p.shift_name}`}
                      </span>
                    </p>
                    <Channels p={p} />
                  </div>
                </li>
              ))}
              <li className="flex items-baseline gap-3">
                <span className="figure w-8 shrink-0 text-muted">{escalation.length + 2}.</span>
                <span>The plant's managers.</span>
              </li>
            </ol>
            {rota.now.until && (
              <p className="mt-2 text-sm text-muted">
                This order holds {untilText(Date.parse(rota.now.until))}.
              </p>
            )}
          </div>
        )}
        <p className="mt-4 text-sm text-muted">
          Times on the plant's clock ({tz}).{" "}
          <a className="font-semibold text-accent underline" href="/account">
            Your phone and how you are told
          </a>
        </p>
      </section>

      {rota.warnings.length > 0 && (
        <section
          aria-labelledby="warn-heading"
          className="card border-l-4 border-l-warn bg-warn-bg p-4"
          data-testid="rota-warnings"
        >
          <h2 id="warn-heading" className="font-bold text-warn">
            <span aria-hidden="true">▲ </span>
            {canEdit ? "To fix in the rota" : "Gaps and warnings"}
          </h2>
          <ul className="mt-2 grid list-disc gap-1 pl-5">
            {rota.warnings.map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        </section>
      )}

      <section aria-labelledby="week-heading">
        <h2 id="week-heading" className="text-xl font-bold">
          The coming week
        </h2>
        <ul className="mt-3 grid gap-3 sm:grid-cols-2 xl:grid-cols-4">
          {week.map(({ weekday, i, segments }) => (
            <li key={weekday} className="card p-3" data-day={DAY_NAMES[weekday]}>
              <h3 className="font-bold">
                {i === 0 ? "Today" : i === 1 ? "Tomorrow" : DAY_NAMES[weekday]}
                {i < 2 && <span className="font-normal text-muted"> · {DAY_NAMES[weekday]}</span>}
              </h3>
              <div className="mt-2 flex h-2.5 overflow-hidden rounded-full" aria-hidden="true">
                {segments.map((s) => (
                  <span
                    key={s.startMinute}
                    className={
                      s.onCall.length
                        ? "bg-accent"
                        : "bg-[repeating-linear-gradient(135deg,var(--c-warn)_0_3px,transparent_3px_6px)]"
                    }
                    style={{ width: `${((s.endMinute - s.startMinute) / 1440) * 100}%` }}
                  />
                ))}
              </div>
              <ul className="mt-2 grid gap-1.5 text-sm">
                {segments.map((s) => (
                  <li key={s.startMinute} className="flex gap-2">
                    <span className="figure shrink-0 text-muted">
                      {formatClockTime(s.startMinute)}–
                      {s.endMinute === 1440 ? "24:00" : formatClockTime(s.endMinute)}
                    </span>
                    {s.onCall.length ? (
                      <span>
                        <span className="font-semibold">{s.onCall[0]!.json.user_name}</span>
                        {s.onCall.length > 1 && (
                          <span className="text-muted">
                            , then{" "}
                            {s.onCall
                              .slice(1)
                              .map((x) => x.json.user_name)
                              .join(", then ")}
                          </span>
                        )}
                      </span>
                    ) : (
                      <span className="font-semibold text-warn">
                        <span aria-hidden="true">▲ </span>nobody on call
                      </span>
                    )}
                  </li>
                ))}
              </ul>
            </li>
          ))}
        </ul>
      </section>

      <section aria-labelledby="shifts-heading">
        <h2 id="shifts-heading" className="text-xl font-bold">
          Shifts ({rota.shifts.length})
        </h2>
        {notice?.where === "list" && <Notice {...notice} />}
        {rota.shifts.length === 0 ? (
          <p className="mt-2 text-muted">No shifts yet.</p>
        ) : (
          <ul className="mt-3 grid gap-2">
            {rota.shifts.map((s) => (
              <li
                key={s.id}
                className={`card grid gap-2 p-3 sm:grid-cols-[1fr_auto] sm:items-center ${editing?.id === s.id ? "outline-2 outline-accent" : ""}`}
                data-shift={s.id}
              >
                <div className="grid gap-1">
                  <p className="flex flex-wrap items-baseline gap-x-2">
                    <span className="text-lg font-bold">{s.user_name}</span>
                    <span className="text-sm text-muted">
                      {roleLabels[s.role]}
                      {s.name && ` · ${s.name}`}
                    </span>
                    {!s.active && <span className="text-sm font-bold text-warn">Deactivated</span>}
                  </p>
                  <p className="figure">
                    {daysLabel(s.weekdays)} · {hoursLabel(s)}
                  </p>
                  <p className="text-sm text-muted">{orderLabel(s.escalation_order)}</p>
                  <Channels p={s} masked={s.phone_masked} />
                </div>
                {canEdit && (
                  <div className="flex flex-wrap gap-2">
                    <button
                      type="button"
                      className="btn btn-quiet"
                      disabled={busy}
                      onClick={() => startEdit(s)}
                    >
                      Edit
                      <span className="sr-only">
                        {" "}
                        {s.name || "shift"} of {s.user_name}
                      </span>
                    </button>
                    <button
                      type="button"
                      className="btn btn-danger"
                      disabled={busy}
                      onClick={() => void remove(s)}
                    >
                      Remove
                      <span className="sr-only">
                        {" "}
                        {s.name || "shift"} of {s.user_name}
                      </span>
                    </button>
                  </div>
                )}
              </li>
            ))}
          </ul>
        )}
      </section>

      {canEdit && (
        <section aria-labelledby="edit-heading" className="card p-4 sm:p-5">
          <h2 id="edit-heading" className="text-lg font-bold">
            {editing ? `Change ${editing.name || "shift"} of ${editing.user_name}` : "Add a shift"}
          </h2>
          <p className="hint">
            Times are the plant's clock ({tz}). Days are the days a shift starts: a night shift from
            22:00 to 06:00 on Friday ends Saturday morning.
          </p>
          <form className="mt-3 grid gap-4 sm:grid-cols-2" onSubmit={save} noValidate>
            {notice?.where === "form" && (
              <div className="sm:col-span-2">
                <Notice {...notice} />
              </div>
            )}
            <Field id="shift-person" label="Person" error={err("user_id")}>
              <select
                id="shift-person"
                className="input"
                value={draft.user_id}
                aria-invalid={err("user_id") ? true : undefined}
                aria-describedby={describe(
                  "user_id",
                  chosenWarning ? "shift-person-warn" : undefined,
                )}
                onChange={(e) => setDraft((d) => ({ ...d, user_id: e.target.value }))}
              >
                <option value="">Choose a person</option>
                {people.map((p) => (
                  <option key={p.id} value={p.id}>
                    {p.name} ({roleLabels[p.role]}){p.has_phone ? "" : " · no phone"}
                    {p.sms ? "" : " · texts off"}
                  </option>
                ))}
              </select>
            </Field>
            <Field id="shift-name" label="Shift name (optional)" error={err("name")}>
              <input
                id="shift-name"
                className="input"
                autoComplete="off"
                value={draft.name}
                maxLength={60}
                aria-invalid={err("name") ? true : undefined}
                aria-describedby={describe("name")}
                onChange={(e) => setDraft((d) => ({ ...d, name: e.target.value }))}
              />
            </Field>
            {chosenWarning && (
              <p
                id="shift-person-warn"
                className="rounded-md bg-warn-bg px-3 py-2 text-sm font-semibold text-warn sm:col-span-2"
                role="status"
              >
                <span aria-hidden="true">▲ </span>
                {chosenWarning}
              </p>
            )}
            <fieldset
              className="grid gap-2 sm:col-span-2"
              aria-describedby={err("weekdays") ? "shift-weekdays-err" : undefined}
            >
              <legend className="label">Days it starts on</legend>
              <label className="flex min-h-11 items-center gap-3 font-semibold">
                <input
                  id="shift-weekdays"
                  type="checkbox"
                  className="h-5 w-5"
                  checked={allDays}
                  onChange={() =>
                    setDraft((d) => ({ ...d, days: allDays ? [] : [0, 1, 2, 3, 4, 5, 6] }))
                  }
                />
                Every day
              </label>
              <div className="flex flex-wrap gap-x-1 gap-y-1">
                {[1, 2, 3, 4, 5, 6, 0].map((d) => (
                  <label
                    key={d}
                    className="flex min-h-11 min-w-16 items-center gap-2 rounded-md border border-line px-2"
                  >
                    <input
                      type="checkbox"
                      className="h-5 w-5"
                      checked={draft.days.includes(d)}
                      onChange={() => toggleDay(d)}
                    />
                    <span aria-hidden="true">{DAY_SHORT[d]}</span>
                    <span className="sr-only">{DAY_NAMES[d]}</span>
                  </label>
                ))}
              </div>
              {err("weekdays") && (
                <p id="shift-weekdays-err" className="error-text">
                  {err("weekdays")}
                </p>
              )}
            </fieldset>
            <Field
              id="shift-start"
              label="Starts at"
              hint="24-hour clock, e.g. 22:00"
              error={err("start")}
            >
              <input
                id="shift-start"
                className="input figure"
                inputMode="numeric"
                autoComplete="off"
                value={draft.start}
                aria-invalid={err("start") ? true : undefined}
                aria-describedby={describe("start")}
                onChange={(e) => setDraft((d) => ({ ...d, start: e.target.value }))}
                onBlur={(e) => setDraft((d) => ({ ...d, start: normaliseClock(e.target.value) }))}
              />
            </Field>
            <Field
              id="shift-end"
              label="Ends at"
              hint="Before the start: ends the next morning. Same as the start: the whole day."
              error={err("end")}
            >
              <input
                id="shift-end"
                className="input figure"
                inputMode="numeric"
                autoComplete="off"
                value={draft.end}
                aria-invalid={err("end") ? true : undefined}
                aria-describedby={describe("end")}
                onChange={(e) => setDraft((d) => ({ ...d, end: e.target.value }))}
                onBlur={(e) => setDraft((d) => ({ ...d, end: normaliseClock(e.target.value) }))}
              />
            </Field>
            {shape && <p className="hint sm:col-span-2">{shape}</p>}
            <Field
              id="shift-escalation-order"
              label="Order"
              hint="Who is told first; the next in order is told when an alert is not acknowledged in time."
              error={err("escalation_order")}
            >
              <select
                id="shift-escalation-order"
                className="input"
                value={draft.escalation_order}
                aria-describedby={describe("escalation_order")}
                onChange={(e) => setDraft((d) => ({ ...d, escalation_order: e.target.value }))}
              >
                {Array.from({ length: Math.min(6, MAX_ESCALATION_ORDER + 1) }, (_, o) => (
                  <option key={o} value={o}>
                    {orderLabel(o)}
                  </option>
                ))}
              </select>
            </Field>
            <div className="flex flex-wrap gap-2 sm:col-span-2">
              <button type="submit" className="btn btn-primary" disabled={busy}>
                {busy ? "Saving…" : editing ? "Save changes" : "Add shift"}
              </button>
              {editing && (
                <button type="button" className="btn btn-quiet" onClick={cancelEdit}>
                  Cancel
                </button>
              )}
            </div>
          </form>
        </section>
      )}
    </div>
  );
}

function Notice({ tone, text }: { tone: "ok" | "error"; text: string }) {
  return (
    <p
      role={tone === "error" ? "alert" : "status"}
      className={`mt-3 rounded-md px-3 py-2 font-semibold ${tone === "error" ? "bg-alarm-bg text-alarm" : "bg-ok-bg text-ok"}`}
    >
      {text}
    </p>
  );
}
