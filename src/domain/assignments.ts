/**
 * Which sensor watches which pour, and when: the rules for putting sensors on a pour. A sensor
 * watches one open pour at a time, so its readings count toward one pour's maturity only.
 * Pure: the caller passes what the database holds and gets back a plan or the reasons to refuse.
 */

export interface KnownSensor {
  id: string;
  kind: "bag" | "embedded" | "bin" | "ambient" | null;
  status: "new" | "active" | "retired";
}

/** One existing assignment of a sensor to some pour. */
export interface ExistingAssignment {
  assignmentId: number;
  sensorId: string;
  pourId: number;
  pourCode: string;
  /** The pour is curing, stripped or ready to ship. */
  pourOpen: boolean;
  fromMs: number;
  toMs: number | null;
}

export interface RequestedAssignment {
  sensorId: string;
  fromMs: number;
}

export interface PlannedMove {
  /** The assignment on the other pour that ends. */
  assignmentId: number;
  sensorId: string;
  pourId: number;
  pourCode: string;
  /** Where it ends: the new assignment's start. */
  endMs: number;
}

export type AssignmentRefusal =
  /** Ids Plinth has never seen: register them by sending a reading, or a manager adds them. */
  | { kind: "unknown"; sensors: string[] }
  /** Retired sensors, or aggregate-bin sensors that never sit in concrete. */
  | { kind: "unsuitable"; sensors: { sensor: string; why: string }[] }
  /** Sensors now on another open pour, and `move` was not given. */
  | { kind: "busy"; sensors: { sensor: string; pourCode: string }[] }
  /** Time windows that cannot be: overlapping an ended assignment, or a move before the other began. */
  | { kind: "overlap"; sensors: { sensor: string; why: string }[] }
  /** The sensor is already on this pour. */
  | { kind: "already"; sensors: string[] };

export type AssignmentPlan =
  { ok: true; moves: PlannedMove[] } | { ok: false; refusal: AssignmentRefusal };

/**
 * Plans putting `requested` sensors on pour `pourId`:
 * - every id must be a sensor Plinth knows, not retired, and not an aggregate-bin sensor;
 * - one that is still on this pour is refused (end it first to put it on again);
 * - one still on another open pour is refused unless `move`; with `move` that assignment ends
 *   where the new one starts, which must not be before the other began;
 * - a window that overlaps an ended assignment on another pour is refused, so no reading counts
 *   toward two pours. An assignment left open on a shipped or void pour does not hold the sensor.
 * The first failing rule, in that order, is the answer.
 */
export function planAssignments(input: {
  pourId: number;
  requested: readonly RequestedAssignment[];
  known: ReadonlyMap<string, KnownSensor>;
  existing: readonly ExistingAssignment[];
  move: boolean;
}): AssignmentPlan {
  const { pourId, requested, known, existing, move } = input;
  const unknown = requested.filter((r) => !known.has(r.sensorId)).map((r) => r.sensorId);
  if (unknown.length > 0) return { ok: false, refusal: { kind: "unknown", sensors: unknown } };

  const unsuitable: { sensor: string; why: string }[] = [];
  for (const r of requested) {
    const s = known.get(r.sensorId)!;
    if (s.status === "retired") unsuitable.push({ sensor: s.id, why: "retired" });
    else if (s.kind === "bin")
      unsuitable.push({ sensor: s.id, why: "an aggregate-bin sensor, not one for concrete" });
  }
  if (unsuitable.length > 0)
    return { ok: false, refusal: { kind: "unsuitable", sensors: unsuitable } };

  const already = requested
    .filter((r) =>
      existing.some((e) => e.sensorId === r.sensorId && e.pourId === pourId && e.toMs === null),
    )
    .map((r) => r.sensorId);
  if (already.length > 0) return { ok: false, refusal: { kind: "already", sensors: already } };

  const holding = (r: RequestedAssignment) =>
    existing.find(
      (e) => e.sensorId === r.sensorId && e.pourId !== pourId && e.pourOpen && e.toMs === null,
    );
  const busy = requested.flatMap((r) => {
    const e = holding(r);
    return e ? [{ sensor: r.sensorId, pourCode: e.pourCode, e, fromMs: r.fromMs }] : [];
  });
  if (busy.length > 0 && !move)
    return {
      ok: false,
      refusal: {
        kind: "busy",
        sensors: busy.map(({ sensor, pourCode }) => ({ sensor, pourCode })),
      },
    };

  const overlaps: { sensor: string; why: string }[] = [];
  for (const b of busy) {
    if (b.fromMs < b.e.fromMs)
      overlaps.push({
        sensor: b.sensor,
        why: `it went on ${b.pourCode} after the time given here; start it on this pour later`,
      });
  }
  for (const r of requested) {
    // An ended window (on any pour) that the new one would start inside.
    const clash = existing.find(
      (e) => e.sensorId === r.sensorId && e.toMs !== null && e.toMs > r.fromMs,
    );
    if (clash)
      overlaps.push({
        sensor: r.sensorId,
        why: `it was on ${clash.pourCode} until after the time given here; start it on this pour later`,
      });
  }
  if (overlaps.length > 0) return { ok: false, refusal: { kind: "overlap", sensors: overlaps } };

  return {
    ok: true,
    moves: busy.map((b) => ({
      assignmentId: b.e.assignmentId,
      sensorId: b.sensor,
      pourId: b.e.pourId,
      pourCode: b.pourCode,
      endMs: b.fromMs,
    })),
  };
}

/** A refusal in one sentence, for a problem's detail. */
export function describeRefusal(refusal: AssignmentRefusal): string {
  switch (refusal.kind) {
    case "unknown":
      return `Plinth has never seen ${list(refusal.sensors)}: a pour can only be watched by a sensor that has reported. Check the id on the sensor's tag, or have a manager register it on the Sensors page once its gateway sends a reading.`;
    case "unsuitable":
      return `These sensors cannot watch a pour: ${refusal.sensors.map((s) => `${s.sensor} (${s.why})`).join(", ")}.`;
    case "busy":
      return `${refusal.sensors.map((s) => `${s.sensor} is on ${s.pourCode}`).join(", ")}. Take it off that pour first, or send "move": true to move it here (its time on the other pour ends where this one starts).`;
    case "overlap":
      return `The times overlap: ${refusal.sensors.map((s) => `${s.sensor}: ${s.why}`).join("; ")}.`;
    case "already":
      return `${list(refusal.sensors)} ${refusal.sensors.length === 1 ? "is" : "are"} already on this pour.`;
  }
}

function list(ids: readonly string[]): string {
  if (ids.length <= 1) return ids.join("");
  return `${ids.slice(0, -1).join(", ")} and ${ids[ids.length - 1]}`;
}

export interface RequestedEnd {
  sensorId: string;
  atMs: number;
}

export type EndPlan =
  | { ok: true; ends: { assignmentId: number; sensorId: string; endMs: number }[] }
  | { ok: false; message: string };

/**
 * Plans taking sensors off pour `pourId`: each must be on it now, and the end may not come
 * before the assignment began (an end at its very start leaves an empty window, which is allowed).
 */
export function planEnds(input: {
  pourId: number;
  requested: readonly RequestedEnd[];
  existing: readonly ExistingAssignment[];
}): EndPlan {
  const ends: { assignmentId: number; sensorId: string; endMs: number }[] = [];
  const notOn: string[] = [];
  const early: string[] = [];
  for (const r of input.requested) {
    const e = input.existing.find(
      (x) => x.sensorId === r.sensorId && x.pourId === input.pourId && x.toMs === null,
    );
    if (!e) notOn.push(r.sensorId);
    else if (r.atMs < e.fromMs) early.push(r.sensorId);
    else ends.push({ assignmentId: e.assignmentId, sensorId: r.sensorId, endMs: r.atMs });
  }
  if (notOn.length > 0)
    return {
      ok: false,
      message: `${list(notOn)} ${notOn.length === 1 ? "is" : "are"} not on this pour now.`,
    };
  if (early.length > 0)
    return {
      ok: false,
      message: `${list(early)}: the end is before ${early.length === 1 ? "it" : "they"} went on the pour.`,
    };
  return { ok: true, ends };
}
