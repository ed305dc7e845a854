import { useEffect, useMemo, useState } from "react";

/** One message a local fake received, as GET /api/v1/dev/outbox lists it. */
export interface DevOutboxEntry {
  channel: "sms" | "email";
  to: string;
  body: string;
  sent_at: string;
}

interface Props {
  initial: DevOutboxEntry[];
  timeZone: string;
  /** How often to look again, in ms. */
  pollMs?: number;
}

type Filter = "all" | "sms" | "email";
const filters: { value: Filter; label: string }[] = [
  { value: "all", label: "Everything" },
  { value: "sms", label: "Texts" },
  { value: "email", label: "E-mail" },
];

/** Date and time to the second, in the plant's time zone: notices often come seconds apart. */
function stamp(ms: number, timeZone: string): string {
  return new Date(ms).toLocaleString("en-US", {
    dateStyle: "short",
    timeStyle: "medium",
    timeZone,
  });
}

const channelBadge = {
  sms: { label: "Text", mark: "◆", style: "bg-info-bg text-accent" },
  email: { label: "E-mail", mark: "✉", style: "bg-surface-2 text-ink" },
} as const;

/**
 * What the local e-mail and SMS fakes caught, newest first, looked at again every few
 * seconds while the page is visible.
 */
export default function DevOutbox({ initial, timeZone, pollMs = 3_000 }: Props) {
  const [items, setItems] = useState(initial);
  const [filter, setFilter] = useState<Filter>("all");
  const [checkedAtMs, setCheckedAtMs] = useState(() => Date.now());
  const [problem, setProblem] = useState<string | null>(null);
  const [fresh, setFresh] = useState(0);

  useEffect(() => {
    let stopped = false;
    let timer: ReturnType<typeof setTimeout> | undefined;
    let known = initial.length;
    async function look() {
      if (document.visibilityState === "visible") {
        try {
          const res = await fetch("/api/v1/dev/outbox", {
            headers: { accept: "application/json" },
          });
          if (res.status === 404)
            setProblem("The local fakes have stopped; nothing new will show.");
          else if (!res.ok) setProblem(`The server answered ${res.status}; trying again.`);
          else {
            const next = (await res.json()) as DevOutboxEntry[];
            if (!stopped) {
              if (next.length > known) setFresh((f) => f + next.length - known);
              known = next.length;
              setItems(next);
              setProblem(null);
              setCheckedAtMs(Date.now());
            }
          }
        } catch {
          setProblem("Plinth cannot be reached; trying again.");
        }
      }
      if (!stopped) timer = setTimeout(look, pollMs);
    }
    timer = setTimeout(look, pollMs);
    return () => {
      stopped = true;
      clearTimeout(timer);
    };
  }, [initial.length, pollMs]);

  const shown = useMemo(
    () => (filter === "all" ? items : items.filter((i) => i.channel === filter)),
    [items, filter],
  );
  const texts = items.filter((i) => i.channel === "sms").length;

  return (
    <section aria-labelledby="caught-heading" className="grid gap-3">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h2 id="caught-heading" className="text-xl font-bold">
            Caught by the fakes
          </h2>
          <p className="hint" role="status" aria-live="polite">
            {items.length === 1 ? "1 message" : `${items.length} messages`} ({texts}{" "}
            {texts === 1 ? "text" : "texts"}, {items.length - texts} e-mail)
            {fresh > 0 && ` · ${fresh} new since you opened this page`} · checked{" "}
            {stamp(checkedAtMs, timeZone)}
          </p>
        </div>
        <div className="flex gap-1" role="group" aria-label="Show">
          {filters.map((f) => (
            <button
              key={f.value}
              type="button"
              className={`btn px-3 text-sm ${filter === f.value ? "btn-primary" : "btn-quiet"}`}
              aria-pressed={filter === f.value}
              onClick={() => setFilter(f.value)}
            >
              {f.label}
            </button>
          ))}
        </div>
      </div>
      {problem && (
        <p className="error-text" role="alert">
          {problem}
        </p>
      )}
      {shown.length === 0 ? (
        <p className="card p-4 text-muted">
          Nothing yet. When an alert tells someone, the e-mail or text shows here within a few
          seconds.
        </p>
      ) : (
        <ol
          className="grid gap-2"
          aria-label="Messages, newest first"
          data-testid="dev-outbox-list"
        >
          {shown.map((m, i) => {
            const badge = channelBadge[m.channel];
            return (
              <li
                key={`${m.sent_at}-${m.channel}-${m.to}-${i}`}
                className="card grid gap-2 p-3 sm:p-4"
                data-channel={m.channel}
              >
                <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
                  <span
                    className={`inline-flex items-center gap-1 rounded-full px-2 py-0.5 text-xs font-bold ${badge.style}`}
                  >
                    <span aria-hidden="true">{badge.mark}</span>
                    {badge.label}
                  </span>
                  <span className="font-semibold break-all">
                    <span className="sr-only">to </span>
                    {m.to}
                  </span>
                  <time className="figure ml-auto text-sm text-muted" dateTime={m.sent_at}>
                    {stamp(Date.parse(m.sent_at), timeZone)}
                  </time>
                </div>
                <p className="text-sm break-words whitespace-pre-wrap">{m.body}</p>
              </li>
            );
          })}
        </ol>
      )}
    </section>
  );
}
