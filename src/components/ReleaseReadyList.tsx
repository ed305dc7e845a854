import { useEffect, useState } from "react";
import type { ReadyList } from "@/domain/release";
import type { UnitSystem } from "@/domain/units";
import type { ReadyItem, ReadyView } from "@/lib/server/strength/ready";
import ReleaseBadge from "./ReleaseBadge";
import { strengthText, whenText, whenWithRelative } from "./ReleaseFormat";

interface Props {
  initial: ReadyView;
  units: UnitSystem;
  timeZone: string;
  refreshMs?: number;
}

const sections: { list: ReadyList; title: string; empty: string }[] = [
  {
    list: "ready_to_strip",
    title: "Ready to strip now",
    empty: "Nothing has reached its strip strength.",
  },
  {
    list: "ready_to_ship",
    title: "Ready to ship now",
    empty: "Nothing has reached its ship strength.",
  },
  { list: "coming_up", title: "Coming up", empty: "No pour is curing toward a strip or a ship." },
  {
    list: "cannot_estimate",
    title: "Cannot estimate",
    empty: "Every open pour has a calibrated mix and sensors.",
  },
];

function Row({
  item,
  list,
  units,
  timeZone,
  now,
}: {
  item: ReadyItem;
  list: ReadyList;
  units: UnitSystem;
  timeZone: string;
  now: number;
}) {
  const m = item[item.next];
  const step = item.next === "strip" ? "strip" : "ship";
  const pct =
    item.strength_psi === null || m.threshold_psi <= 0
      ? 0
      : Math.min(100, Math.floor((item.strength_psi / m.threshold_psi) * 100));
  const pieces = item.products.map((p) => `${p.piece_count} × ${p.product}`).join(", ");
  return (
    <li>
      <a
        href={`/pours/${item.pour_id}/strength`}
        className="card block p-4 hover:bg-surface-2"
        data-testid="ready-row"
        data-pour={item.code}
        data-list={list}
      >
        <div className="flex flex-wrap items-start justify-between gap-2">
          <div>
            <p className="figure text-2xl font-bold leading-tight">{item.code}</p>
            <p className="text-muted">
              {item.mix}
              {item.bed ? ` · ${item.bed}` : ""}
            </p>
          </div>
          <div className="flex flex-col items-end gap-1">
            {list === "ready_to_strip" && (
              <ReleaseBadge tone="warn" large label="Awaiting QC strip sign-off" />
            )}
            {list === "ready_to_ship" &&
              (m.released_at ? (
                <ReleaseBadge
                  tone="ok"
                  large
                  label={`Released to ship by ${m.released_by}, ${whenText(Date.parse(m.released_at), timeZone, now)}`}
                />
              ) : (
                <ReleaseBadge tone="warn" large label="Awaiting QC ship sign-off" />
              ))}
            {list === "coming_up" && <ReleaseBadge tone="info" large label={`Next: ${step}`} />}
            {list === "cannot_estimate" && (
              <ReleaseBadge tone="alarm" large label={item.reason ?? "Cannot estimate"} />
            )}
            {!item.complete_record && <ReleaseBadge tone="warn" label="Record incomplete" />}
          </div>
        </div>
        {list !== "cannot_estimate" && item.strength_psi !== null && (
          <div className="mt-2">
            <p className="figure text-3xl font-bold leading-tight">
              {strengthText(item.strength_psi, units)}
            </p>
            <div
              role="progressbar"
              aria-label={`${item.code}: progress to ${step}`}
              aria-valuemin={0}
              aria-valuemax={100}
              aria-valuenow={pct}
              className="mt-1 h-2.5 w-full overflow-hidden rounded-full border border-line bg-surface-2"
            >
              <div
                className={`h-full rounded-full ${pct >= 100 ? "bg-ok" : "bg-accent"}`}
                style={{ width: `${pct}%` }}
              />
            </div>
            <p className="mt-1 text-sm text-muted">
              <span className="figure">{pct} %</span> of the{" "}
              <span className="figure">{strengthText(m.threshold_psi, units)}</span> needed to{" "}
              {step}
            </p>
          </div>
        )}
        <p className="mt-1 font-semibold">
          {list === "coming_up"
            ? item.due_at
              ? `${step === "strip" ? "Strip" : "Ship"} forecast ${whenWithRelative(Date.parse(item.due_at), timeZone, now)}`
              : "No forecast yet: the last 6 hours were too cold or had no readings"
            : list === "cannot_estimate"
              ? "Strip and ship need cylinder breaks or a calibrated mix."
              : item.ready_since
                ? `${m.reached_at ? "Reached" : "Released"} ${whenWithRelative(Date.parse(item.ready_since), timeZone, now)}`
                : ""}
        </p>
        {pieces && <p className="mt-1 text-sm text-muted">{pieces}</p>}
      </a>
    </li>
  );
}

/**
 * The floor's strip and ship list: what is ready now, what comes next (soonest first), and what
 * cannot be estimated. Big enough to read on a phone at night; refreshes every minute.
 */
export default function ReleaseReadyList({ initial, units, timeZone, refreshMs = 60_000 }: Props) {
  const [data, setData] = useState(initial);
  const [stale, setStale] = useState(false);
  useEffect(() => {
    let alive = true;
    const timer = window.setInterval(async () => {
      try {
        const res = await fetch("/api/v1/ready");
        if (!res.ok) throw new Error(String(res.status));
        const next = (await res.json()) as ReadyView;
        if (alive) {
          setData(next);
          setStale(false);
        }
      } catch {
        if (alive) setStale(true);
      }
    }, refreshMs);
    return () => {
      alive = false;
      window.clearInterval(timer);
    };
  }, [refreshMs]);
  const now = Date.parse(data.as_of);
  return (
    <div className="grid gap-6">
      <p role="status" className="text-sm text-muted">
        As of {whenText(now, timeZone, now)}
        {stale ? " · could not refresh; this list may be out of date" : " · refreshed every minute"}
      </p>
      {sections.map((s) => {
        const items = data[s.list];
        return (
          <section key={s.list} aria-labelledby={`list-${s.list}`} data-testid={`list-${s.list}`}>
            <h2 id={`list-${s.list}`} className="mb-2 text-xl font-bold">
              {s.title} <span className="figure text-muted">({items.length})</span>
            </h2>
            {items.length === 0 ? (
              <p className="card p-4 text-muted">{s.empty}</p>
            ) : (
              <ul className="grid gap-3 lg:grid-cols-2">
                {items.map((item) => (
                  <Row
                    key={item.pour_id}
                    item={item}
                    list={s.list}
                    units={units}
                    timeZone={timeZone}
                    now={now}
                  />
                ))}
              </ul>
            )}
          </section>
        );
      })}
    </div>
  );
}
