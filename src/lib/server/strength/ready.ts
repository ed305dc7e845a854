/**
 * The floor's ready view (GET /api/v1/ready and the /ready page): every open pour with its
 * governing strength and strip and ship milestones, on one of four lists: ready to strip now,
 * ready to ship now, coming up (soonest forecast first), and cannot estimate (listed apart).
 */
import {
  compareReadyTimes,
  placeOnReadyList,
  type PourStatus,
  type ReadyList,
  type ReleaseKind,
} from "@/domain/release";
import { listOpenPours } from "../db/queries/plant";
import { listReleasesOfPours, type ReleaseWithPerson } from "../db/queries/releases";
import { pourStrength, type Milestone } from "./pourStrength";

const ms = (s: string | null) => (s === null ? null : Date.parse(s));
const iso = (v: number | null) => (v === null ? null : new Date(v).toISOString());

export interface ReadyMilestone extends Milestone {
  released_at: string | null;
  released_by: string | null;
}

export interface ReadyItem {
  pour_id: number;
  code: string;
  mix: string;
  status: string;
  bed: string | null;
  cast_at: string;
  products: { product: string; piece_count: number }[];
  /** The next step: the strip until it is released, then the ship. */
  next: ReleaseKind;
  governing_sensor: string | null;
  /** The governing (weakest) sensor's estimate; null when the mix is not calibrated. */
  strength_psi: number | null;
  complete_record: boolean;
  /** On the ready lists: since when (reached, or released on an override). */
  ready_since: string | null;
  /** Coming up: the forecast of the next step; null when none can be made. */
  due_at: string | null;
  /** Cannot estimate: why. */
  reason: string | null;
  strip: ReadyMilestone;
  ship: ReadyMilestone;
}

export type ReadyView = { as_of: string } & Record<ReadyList, ReadyItem[]>;

function withRelease(m: Milestone, r: ReleaseWithPerson | undefined): ReadyMilestone {
  return {
    ...m,
    released_at: r ? new Date(r.releasedAt).toISOString() : null,
    released_by: r ? r.releasedByName : null,
  };
}

/** Every open pour, placed on its list, soonest first within each. */
export function readyView(nowMs = Date.now()): ReadyView {
  const open = listOpenPours();
  const releases = listReleasesOfPours(open.map((p) => p.id));
  const lists: Record<ReadyList, { item: ReadyItem; at: number | null }[]> = {
    ready_to_strip: [],
    ready_to_ship: [],
    coming_up: [],
    cannot_estimate: [],
  };
  for (const p of open) {
    const view = pourStrength(p.id, nowMs);
    if (!view) continue;
    const rs = releases.get(p.id) ?? [];
    const place = placeOnReadyList({
      status: p.status as PourStatus,
      releases: rs.map((r) => ({ kind: r.kind, atMs: r.releasedAt })),
      calibrated: view.calibrated,
      hasSensors: view.sensors.length > 0,
      strip: { reachedAtMs: ms(view.strip.reached_at), forecastAtMs: ms(view.strip.forecast_at) },
      ship: { reachedAtMs: ms(view.ship.reached_at), forecastAtMs: ms(view.ship.forecast_at) },
    });
    if (place.list === null) continue;
    const governing = view.sensors.find((s) => s.sensor === view.governing_sensor);
    const at =
      place.list === "coming_up"
        ? place.dueAtMs
        : place.list === "cannot_estimate"
          ? p.castAt
          : place.sinceMs;
    lists[place.list].push({
      at,
      item: {
        pour_id: p.id,
        code: p.code,
        mix: p.mixName,
        status: p.status,
        bed: p.bed,
        cast_at: new Date(p.castAt).toISOString(),
        products: p.products.map((x) => ({ product: x.product, piece_count: x.pieceCount })),
        next: place.next,
        governing_sensor: view.governing_sensor,
        strength_psi: governing?.strength_psi ?? null,
        complete_record: view.complete_record,
        ready_since:
          place.list === "ready_to_strip" || place.list === "ready_to_ship"
            ? iso(place.sinceMs)
            : null,
        due_at: place.list === "coming_up" ? iso(place.dueAtMs) : null,
        reason: place.list === "cannot_estimate" ? place.reason : null,
        strip: withRelease(
          view.strip,
          rs.find((r) => r.kind === "strip"),
        ),
        ship: withRelease(
          view.ship,
          rs.find((r) => r.kind === "ship"),
        ),
      },
    });
  }
  const sorted = (k: ReadyList) =>
    lists[k].sort((a, b) => compareReadyTimes(a.at, b.at)).map((x) => x.item);
  return {
    as_of: new Date(nowMs).toISOString(),
    ready_to_strip: sorted("ready_to_strip"),
    ready_to_ship: sorted("ready_to_ship"),
    coming_up: sorted("coming_up"),
    cannot_estimate: sorted("cannot_estimate"),
  };
}
