/**
 * A pour's life from cast to shipped, as a pure rule: which status may follow which, and what
 * each move needs. Stripping and shipping are decisions QC signs off with a release (strip or
 * ship); this module only records the pieces' state and refuses a move the record does not
 * support. Pure: no I/O, time passed in by the caller.
 *
 * The statuses (the same words as the pours table):
 * - `curing`: cast and in the cure enclosure;
 * - `stripped`: out of the forms (after a strip release);
 * - `ready_to_ship`: a ship release says the pieces may leave;
 * - `shipped`: the pieces have left the plant (final);
 * - `void`: recorded in error or scrapped, with a reason (final).
 */

export const pourStatuses = ["curing", "stripped", "ready_to_ship", "shipped", "void"] as const;
export type PourStatus = (typeof pourStatuses)[number];

/** The main line of a pour's life, in order (void stands apart). */
export const lifecycleSteps = ["curing", "stripped", "ready_to_ship", "shipped"] as const;

/** Statuses whose sensors still count maturity and whose record may still change. */
export const openStatuses: readonly PourStatus[] = ["curing", "stripped", "ready_to_ship"];

export const statusLabels: Record<PourStatus, string> = {
  curing: "Curing",
  stripped: "Stripped",
  ready_to_ship: "Ready to ship",
  shipped: "Shipped",
  void: "Void",
};

export const isOpenStatus = (s: PourStatus): boolean => openStatuses.includes(s);

/** Longest reason kept for a void, in characters. */
export const MAX_REASON_CHARS = 500;

/** What the record holds that a move may need. */
export interface LifecycleFacts {
  /** A strip release by QC exists for the pour. */
  hasStripRelease: boolean;
  /** A ship release by QC exists for the pour. */
  hasShipRelease: boolean;
}

export type TransitionRefusal =
  /** The pour is already in that status. */
  | "same"
  /** Shipped and void are final. */
  | "final"
  /** A step back, or a step the lifecycle has no place for. */
  | "backward"
  /** Stripped needs a strip release first. */
  | "needs_strip_release"
  /** Ready to ship and shipped need a ship release first. */
  | "needs_ship_release"
  /** Void needs a reason. */
  | "needs_reason";

export type TransitionCheck =
  | { ok: true; from: PourStatus; to: PourStatus }
  | { ok: false; refusal: TransitionRefusal; message: string };

const order = (s: PourStatus) => (lifecycleSteps as readonly string[]).indexOf(s);

/**
 * Whether a pour may move from `from` to `to`, given what the record holds.
 *
 * - Forward only along curing → stripped → ready_to_ship → shipped; a step may be skipped
 *   (a pour shipped straight from the bed) when the release it needs exists.
 * - `stripped` needs a strip release (or a ship release, which rests on a higher strength);
 *   `ready_to_ship` and `shipped` need a ship release: stripping or shipping too early can
 *   crack or drop a piece, so the sign-off comes first (Plinth rule; QC's release defers to the
 *   engineer of record and local codes).
 * - `void` from any open status, with a non-empty reason.
 * - `shipped` and `void` are final; nothing moves back.
 */
export function checkTransition(
  from: PourStatus,
  to: PourStatus,
  facts: LifecycleFacts,
  reason?: string | null,
): TransitionCheck {
  if (from === to)
    return { ok: false, refusal: "same", message: `The pour is already ${statusLabels[to]}.` };
  if (!isOpenStatus(from))
    return {
      ok: false,
      refusal: "final",
      message: `A ${statusLabels[from].toLowerCase()} pour is final: its status cannot change.`,
    };
  if (to === "void") {
    if (!reason || reason.trim() === "")
      return { ok: false, refusal: "needs_reason", message: "Give a reason to void the pour." };
    return { ok: true, from, to };
  }
  if (order(to) <= order(from))
    return {
      ok: false,
      refusal: "backward",
      message: `A pour cannot go back from ${statusLabels[from]} to ${statusLabels[to]}.`,
    };
  if (to === "stripped" && !facts.hasStripRelease && !facts.hasShipRelease)
    return {
      ok: false,
      refusal: "needs_strip_release",
      message:
        "Stripped is recorded after QC signs a strip release: there is no strip release for this pour yet.",
    };
  if ((to === "ready_to_ship" || to === "shipped") && !facts.hasShipRelease)
    return {
      ok: false,
      refusal: "needs_ship_release",
      message: `${statusLabels[to]} needs a ship release signed by QC first: there is no ship release for this pour yet.`,
    };
  return { ok: true, from, to };
}

/** The statuses a pour may move to now (for the buttons a page offers). */
export function allowedTransitions(from: PourStatus, facts: LifecycleFacts): PourStatus[] {
  return pourStatuses.filter((to) => checkTransition(from, to, facts, "reason").ok);
}
