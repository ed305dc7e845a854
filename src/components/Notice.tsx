import type { ReactNode } from "react";

/** The outcome of an action, to tell the person who did it. */
export interface Notice {
  tone: "ok" | "error";
  text: string;
}

/** An error interrupts (role="alert"); anything else is read out when there is a pause. */
const roleOf = (tone: Notice["tone"] | "warn") => (tone === "error" ? "alert" : "status");

const bannerTones = {
  ok: "bg-ok-bg text-ok",
  warn: "bg-warn-bg text-warn",
  error: "bg-alarm-bg text-alarm",
} as const;

const bannerLooks = {
  /** A line inside a form, above or below its fields. */
  line: "rounded-md px-3 py-2 text-sm",
  /** A card of its own among a panel's cards. */
  card: "card p-3",
} as const;

/**
 * An outcome or caution said in words, the colour only backing them up: "ok" and "warn" are
 * statuses, "error" an alert.
 */
export function Banner({
  tone,
  text,
  look = "line",
}: {
  tone: Notice["tone"] | "warn";
  text: string;
  look?: keyof typeof bannerLooks;
}) {
  return (
    <p role={roleOf(tone)} className={`${bannerLooks[look]} font-semibold ${bannerTones[tone]}`}>
      {text}
    </p>
  );
}

/**
 * A page's notice card above its lists, for the outcome of an action on a row. The words stay
 * in ink on the ok colour; children are the words and what goes with them (a one-time
 * password, a Dismiss button), and className lays them out.
 */
export function NoticeCard({
  tone,
  className,
  children,
}: {
  tone: Notice["tone"];
  className?: string;
  children: ReactNode;
}) {
  return (
    <div
      role={roleOf(tone)}
      className={`card p-4 ${className ? `${className} ` : ""}${tone === "error" ? "bg-alarm-bg text-alarm" : "bg-ok-bg"}`}
    >
      {children}
    </div>
  );
}
