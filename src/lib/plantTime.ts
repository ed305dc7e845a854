/**
 * Times typed into a form as the plant's wall-clock time (an <input type="datetime-local">),
 * whatever time zone the phone or browser is set to. Shared by pages and islands.
 */
import { TZDate } from "@date-fns/tz";
import { format } from "date-fns";

/** "2026-03-02T04:10" in the plant's time zone, for a datetime-local input's value. */
export function toPlantInput(ms: number, timeZone: string): string {
  return format(new TZDate(ms, timeZone), "yyyy-MM-dd'T'HH:mm");
}

/** Epoch ms of a datetime-local value read as the plant's wall-clock time; null when not a time. */
export function fromPlantInput(value: string, timeZone: string): number | null {
  const m = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2}))?$/.exec(value.trim());
  if (!m) return null;
  const [, y, mo, d, h, mi, s] = m.map(Number) as number[];
  const ms = new TZDate(y!, mo! - 1, d!, h!, mi!, s || 0, timeZone).getTime();
  return Number.isFinite(ms) ? ms : null;
}
