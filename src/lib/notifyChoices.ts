/**
 * How a person chose to hear of alerts, as kept in `users.notify_json`
 * (`{"sms":true,"email":true,"digest":true}`), read the same way by the account page, the
 * rota and the notifier. Older rows lack `digest`: QC and managers then get the daily digest,
 * everyone else does not. Anything unreadable falls back to these defaults.
 */
import type { Role } from "@/lib/access";

export interface NotifyChoices {
  /** Alert texts to their phone (when they have one). */
  sms: boolean;
  /** Alert e-mails. */
  email: boolean;
  /** The daily digest e-mail of minor (information-level) alerts. */
  digest: boolean;
}

/** The digest's default for a role: the people who answer for quality read it. */
export function digestDefault(role: Role): boolean {
  return role === "qc" || role === "manager";
}

export function readNotifyChoices(
  notifyJson: string | null | undefined,
  role: Role,
): NotifyChoices {
  const raw = parseObject(notifyJson);
  const flag = (v: unknown, fallback: boolean) => (typeof v === "boolean" ? v : fallback);
  return {
    sms: flag(raw.sms, true),
    email: flag(raw.email, true),
    digest: flag(raw.digest, digestDefault(role)),
  };
}

/**
 * The stored JSON after a change of some choices. Only the choices changed are written, so a
 * digest never chosen keeps following the person's role; keys it does not know are kept.
 */
export function mergeNotifyChoices(
  notifyJson: string | null | undefined,
  change: Partial<NotifyChoices>,
): string {
  const next = parseObject(notifyJson);
  for (const k of ["sms", "email", "digest"] as const) {
    const v = change[k];
    if (v !== undefined) next[k] = v;
  }
  return JSON.stringify(next);
}

function parseObject(text: string | null | undefined): Record<string, unknown> {
  try {
    const parsed: unknown = JSON.parse(text ?? "{}");
    if (parsed && typeof parsed === "object" && !Array.isArray(parsed))
      return parsed as Record<string, unknown>;
  } catch {
    // unreadable: start again from the defaults
  }
  return {};
}
