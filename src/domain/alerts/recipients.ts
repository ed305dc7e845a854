/**
 * Who is told about an episode, and how: the pure choice, given the rule's audience and
 * severity, the people on call now (in escalation order) and the plant's staff with their
 * channel choices. The engine turns each delivery into an outbox row.
 *
 * - `on_call`, warning or critical: the first person on call gets a text (an e-mail when
 *   they have no phone or texts turned off); QC and managers get an e-mail. Nobody on call:
 *   the managers are texted instead, so an alarm never goes to no one.
 * - Escalation n: the n-th person on call (0 is the first); past the end of the rota, every
 *   manager, once; after that nobody more.
 * - `quality`: QC and managers by e-mail.
 * - `digest`, and any information-level episode: nothing now; the next digest lists it.
 */
import type { Audience, Severity } from "./rules";

export interface Person {
  id: number;
  name: string;
  role: "manager" | "qc" | "operator" | "viewer";
  email: string;
  phone: string | null;
  wantsSms: boolean;
  wantsEmail: boolean;
  wantsDigest: boolean;
  units: "us" | "si";
}

export interface Delivery {
  person: Person;
  channel: "sms" | "email";
  to: string;
}

/** A text when the person has a phone and takes texts; else an e-mail when they take e-mail. */
export function urgentDelivery(p: Person): Delivery | null {
  if (p.phone && p.wantsSms) return { person: p, channel: "sms", to: p.phone };
  if (p.wantsEmail) return { person: p, channel: "email", to: p.email };
  return null;
}

function emailTo(p: Person): Delivery | null {
  return p.wantsEmail ? { person: p, channel: "email", to: p.email } : null;
}

const isQuality = (p: Person) => p.role === "qc" || p.role === "manager";

/** Adds deliveries, one per person and channel. */
function collect(into: Delivery[], more: (Delivery | null)[]): Delivery[] {
  for (const d of more) {
    if (!d) continue;
    if (into.some((x) => x.person.id === d.person.id && x.channel === d.channel)) continue;
    into.push(d);
  }
  return into;
}

/** Whether an episode is told at once (else only the digest lists it). */
export function noticeNow(audience: Audience, severity: Severity): boolean {
  if (audience === "digest") return false;
  if (audience === "quality") return true;
  return severity !== "info";
}

/** Who hears of a newly opened episode. */
export function firstDeliveries(input: {
  audience: Audience;
  severity: Severity;
  onCall: readonly Person[];
  staff: readonly Person[];
}): Delivery[] {
  const { audience, severity, onCall, staff } = input;
  if (!noticeNow(audience, severity)) return [];
  const out: Delivery[] = [];
  if (audience === "on_call") {
    const first = onCall[0];
    if (first) collect(out, [urgentDelivery(first)]);
    else collect(out, staff.filter((p) => p.role === "manager").map(urgentDelivery));
  }
  return collect(out, staff.filter(isQuality).map(emailTo));
}

/**
 * Who is told at escalation level `level` (1 is the first escalation): the next person on
 * call, or past the rota's end every manager; null when there is nobody further to tell.
 */
export function escalationDeliveries(input: {
  level: number;
  onCall: readonly Person[];
  staff: readonly Person[];
}): Delivery[] | null {
  const { level, onCall, staff } = input;
  if (level < 1) return null;
  const next = onCall[level];
  if (next) return collect([], [urgentDelivery(next)]);
  if (level === Math.max(onCall.length, 1)) {
    const managers = staff.filter((p) => p.role === "manager");
    return collect([], managers.map(urgentDelivery));
  }
  return null;
}

/** Who gets the digest: QC and managers who want it, and anyone else who asked for it. */
export function digestRecipients(staff: readonly Person[]): Delivery[] {
  return collect(
    [],
    staff.filter((p) => p.wantsDigest).map((p) => emailTo(p)),
  );
}
