import { useId, useRef, useState, type FormEvent, type KeyboardEvent } from "react";
import {
  alertWhatText,
  keepUnitsTogether,
  severityLook,
  stateLook,
  type EpisodeState,
} from "@/domain/alerts/episodeWords";
import type { RuleKind } from "@/domain/alerts/episode";
import type { Severity } from "@/domain/alerts/rules";
import type { UnitSystem } from "@/domain/units";
import { readProblem } from "@/lib/format";
import type { presentEpisode } from "@/lib/server/present/alerts";

/** One episode as GET /api/v1/alerts answers it. */
export type AlertItem = ReturnType<typeof presentEpisode>;

/** A rule's limits (SI) by rule id, so lists show them in the reader's units. */
export type RuleLimits = Record<number, { threshold: number | null; thresholdHigh: number | null }>;

const tones = {
  alarm: "bg-alarm-bg text-alarm",
  warn: "bg-warn-bg text-warn",
  ok: "bg-ok-bg text-ok",
  info: "bg-info-bg text-accent",
} as const;

/** Severity by word and mark, never colour alone. */
export function SeverityBadge({
  severity,
  large = false,
}: {
  severity: Severity;
  large?: boolean;
}) {
  const s = severityLook[severity];
  return (
    <span
      className={`inline-flex items-center gap-1 rounded-full px-2.5 py-0.5 font-bold ${large ? "text-sm" : "text-xs"} ${tones[s.tone]}`}
    >
      <span aria-hidden="true">{s.mark}</span>
      {s.word}
    </span>
  );
}

/** An episode's state by word and mark. */
export function EpisodeStateBadge({
  state,
  large = false,
}: {
  state: EpisodeState;
  large?: boolean;
}) {
  const s = stateLook[state];
  return (
    <span
      className={`inline-flex items-center gap-1 rounded-full px-2.5 py-0.5 font-bold ${large ? "text-sm" : "text-xs"} ${tones[s.tone]}`}
      data-testid="episode-state"
    >
      <span aria-hidden="true">{s.mark}</span>
      {s.word}
    </span>
  );
}

/** What is wrong, in the reader's units, from the episode and its rule's limits. */
export function whatOf(
  e: AlertItem,
  limits: RuleLimits,
  units: UnitSystem,
  which: "last" | "worst" = "last",
): string {
  const rule = limits[e.rule_id];
  const value =
    which === "worst"
      ? (e.worst_value ?? e.last_value ?? e.trigger_value)
      : (e.last_value ?? e.worst_value ?? e.trigger_value);
  if (!rule) return e.limit;
  return keepUnitsTogether(
    alertWhatText(
      {
        kind: e.rule_kind as RuleKind,
        threshold: rule.threshold,
        thresholdHigh: rule.thresholdHigh,
      },
      value,
      units,
    ),
  );
}

/** The sensor as people name it: "CB-14 · Bed 3 north bag". */
export function sensorName(e: { sensor: string | null; sensor_label: string | null }): string {
  if (!e.sensor) return "Whole pour";
  return e.sensor_label && e.sensor_label !== e.sensor
    ? `${e.sensor} · ${e.sensor_label}`
    : e.sensor;
}

interface AckProps {
  episodeId: number;
  /** What is being acknowledged, for the button's accessible name. */
  subject: string;
  onDone: (item: AlertItem) => void;
  /** When someone else acknowledged it first: show who, and refresh. */
  onConflict?: () => void;
}

/**
 * The acknowledge button and, once pressed, the note of what was done. One hand on a phone:
 * the button spans the card's width at its foot; the note and the send button follow it.
 */
export function AckForm({ episodeId, subject, onDone, onConflict }: AckProps) {
  const id = useId();
  const [open, setOpen] = useState(false);
  const [note, setNote] = useState("");
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const openButton = useRef<HTMLButtonElement>(null);

  async function send(ev?: FormEvent) {
    ev?.preventDefault();
    if (busy) return;
    setBusy(true);
    setError(null);
    try {
      const res = await fetch(`/api/v1/alerts/${episodeId}/ack`, {
        method: "POST",
        headers: { "content-type": "application/json", accept: "application/json" },
        body: JSON.stringify({ note: note.trim() === "" ? null : note.trim() }),
      });
      if (!res.ok) {
        const p = await readProblem(res);
        setError(p.fields.note ?? p.message);
        if (res.status === 409) onConflict?.();
        return;
      }
      const item = (await res.json()) as AlertItem;
      setOpen(false);
      setNote("");
      onDone(item);
    } catch {
      setError("Plinth could not be reached. Check the connection and press Acknowledge again.");
    } finally {
      setBusy(false);
    }
  }

  function onKey(ev: KeyboardEvent<HTMLTextAreaElement>) {
    if (ev.key === "Enter" && (ev.ctrlKey || ev.metaKey)) void send();
    if (ev.key === "Escape") {
      setOpen(false);
      requestAnimationFrame(() => openButton.current?.focus());
    }
  }

  if (!open)
    return (
      <div className="mt-4">
        <button
          ref={openButton}
          type="button"
          className="btn btn-primary min-h-14 w-full text-lg"
          aria-label={`Acknowledge: ${subject}`}
          aria-expanded={false}
          onClick={() => setOpen(true)}
        >
          Acknowledge
        </button>
        {error && (
          <p role="alert" className="error-text mt-2">
            {error}
          </p>
        )}
      </div>
    );

  return (
    <form
      className="mt-4 grid gap-3"
      onSubmit={(e) => void send(e)}
      aria-label={`Acknowledge: ${subject}`}
    >
      <div className="field">
        <label htmlFor={`${id}-note`} className="text-base">
          What did you do?
        </label>
        <textarea
          id={`${id}-note`}
          className="input min-h-24 py-2 text-lg"
          rows={3}
          maxLength={500}
          value={note}
          autoFocus
          aria-describedby={`${id}-hint${error ? ` ${id}-err` : ""}`}
          aria-invalid={error ? true : undefined}
          onChange={(e) => setNote(e.target.value)}
          onKeyDown={onKey}
        />
        <p id={`${id}-hint`} className="hint">
          For the record, e.g. “re-wet the pads, closed the tarp”. You may leave it empty.
        </p>
        {error && (
          <p id={`${id}-err`} role="alert" className="error-text">
            {error}
          </p>
        )}
      </div>
      <div className="grid grid-cols-[1fr_auto] gap-2">
        <button type="submit" className="btn btn-primary min-h-14 text-lg" disabled={busy}>
          {busy ? "Sending…" : "Acknowledge"}
        </button>
        <button
          type="button"
          className="btn btn-quiet min-h-14"
          onClick={() => {
            setOpen(false);
            setError(null);
            requestAnimationFrame(() => openButton.current?.focus());
          }}
        >
          Cancel
        </button>
      </div>
    </form>
  );
}
