/**
 * Sensor calibration checks: when the next check is due, whether one is overdue, and the
 * offset a check sets. Pure; time passed in as epoch milliseconds.
 *
 * A check compares a sensor with a reference thermometer at the same place and time. The
 * offset it sets is added to every reading the sensor sends from then on (ingest applies it);
 * readings already stored keep the values they were stored with.
 */

/**
 * Months between checks. domain.md §7.1, ASTM C511: recording thermometers must be verified
 * against a reference thermometer at least every 6 months.
 */
export const CALIBRATION_INTERVAL_MONTHS = 6;

/** A check falls "due soon" this long before its due time, so QC can plan it. */
export const CALIBRATION_DUE_SOON_MS = 14 * 86_400_000;

/** The largest temperature offset a check may set; a sensor further out is replaced, not corrected. */
export const MAX_TEMP_OFFSET_C = 10;
/** The largest humidity offset a check may set, in percentage points of RH. */
export const MAX_RH_OFFSET_PCT = 20;

/**
 * The date a check made at `checkedAtMs` runs out: the same UTC day and time six calendar
 * months later, clamped to the last day of a shorter month (31 Aug -> 28 or 29 Feb).
 * domain.md §7.1, ASTM C511: verify recording thermometers at least every 6 months.
 */
export function nextCalibrationDue(checkedAtMs: number): number {
  const d = new Date(checkedAtMs);
  const day = d.getUTCDate();
  const target = new Date(checkedAtMs);
  target.setUTCDate(1);
  target.setUTCMonth(target.getUTCMonth() + CALIBRATION_INTERVAL_MONTHS);
  const lastDay = new Date(
    Date.UTC(target.getUTCFullYear(), target.getUTCMonth() + 1, 0),
  ).getUTCDate();
  target.setUTCDate(Math.min(day, lastDay));
  return target.getTime();
}

/**
 * True when a sensor's check is overdue at `nowMs`: no check on record (null), or the due
 * time passed. The due time is the one recorded with the check when given (QC may set a
 * shorter interval), else six months after it (nextCalibrationDue).
 */
export function calibrationOverdue(
  lastCheckMs: number | null,
  nowMs: number,
  nextDueAtMs: number | null = null,
): boolean {
  if (lastCheckMs === null) return true;
  return nowMs >= (nextDueAtMs ?? nextCalibrationDue(lastCheckMs));
}

export type SensorKind = "bag" | "embedded" | "bin" | "ambient";

/**
 * Which sensors are held to the six-month check. Cure-bag, embedded and ambient sensors make
 * the cure record that maturity, strip and ship decisions rest on, so they are. Aggregate-bin
 * sensors are not: they feed the batch-temperature estimate, a planning aid checked against
 * the thermometer in the fresh concrete, never a cure record; a check may still be recorded for
 * one and its offset is applied, but a bin is never flagged as overdue. Sensors not yet
 * named (no kind) and retired sensors are not flagged either.
 */
export function calibrationRequired(
  kind: SensorKind | null,
  status: "new" | "active" | "retired",
): boolean {
  return status === "active" && (kind === "bag" || kind === "embedded" || kind === "ambient");
}

/**
 * Where a sensor stands with its checks:
 * - "exempt": not held to the interval (see calibrationRequired);
 * - "never": no check on record;
 * - "overdue": past its due time;
 * - "due_soon": due within CALIBRATION_DUE_SOON_MS;
 * - "current": checked and not due soon.
 */
export type CalibrationStanding = "exempt" | "never" | "overdue" | "due_soon" | "current";

export function calibrationStanding(
  kind: SensorKind | null,
  status: "new" | "active" | "retired",
  last: { checkedAtMs: number; nextDueAtMs: number | null } | null,
  nowMs: number,
): CalibrationStanding {
  if (!calibrationRequired(kind, status)) return "exempt";
  if (!last) return "never";
  const dueMs = last.nextDueAtMs ?? nextCalibrationDue(last.checkedAtMs);
  if (calibrationOverdue(last.checkedAtMs, nowMs, dueMs)) return "overdue";
  return dueMs - nowMs <= CALIBRATION_DUE_SOON_MS ? "due_soon" : "current";
}

/**
 * The temperature offset a check sets when none is given: reference minus the sensor's own
 * (uncorrected) reading, in °C, rounded to 0.001 °C so that 20.0 − 20.4 is stored as −0.4.
 */
export function offsetFromCheck(referenceTempC: number, sensorTempC: number): number {
  const raw = referenceTempC - sensorTempC;
  const rounded = Math.round(raw * 1000) / 1000;
  return rounded === 0 ? 0 : rounded;
}
