import { describe, expect, it } from "vitest";
import {
  CALIBRATION_DUE_SOON_MS,
  calibrationOverdue,
  calibrationRequired,
  calibrationStanding,
  nextCalibrationDue,
  offsetFromCheck,
} from "./calibration";

const utc = (iso: string) => Date.parse(iso);

describe("next calibration due", () => {
  // domain.md §7.1, ASTM C511: verify against a reference thermometer at least every 6 months.
  it.each([
    ["2026-03-02T04:10:00Z", "2026-09-02T04:10:00Z", "six calendar months, same day and time"],
    ["2026-08-31T12:00:00Z", "2027-02-28T12:00:00Z", "a 31st lands on the last day of February"],
    ["2027-08-31T12:00:00Z", "2028-02-29T12:00:00Z", "a leap February keeps its 29th"],
    ["2026-10-15T00:00:00Z", "2027-04-15T00:00:00Z", "the year rolls over"],
    ["2026-12-31T23:59:00Z", "2027-06-30T23:59:00Z", "December 31st lands on June 30th"],
  ])("a check on %s is due by %s (%s)", (checked, due) => {
    expect(new Date(nextCalibrationDue(utc(checked))).toISOString()).toBe(
      new Date(utc(due)).toISOString(),
    );
  });
});

describe("calibration overdue", () => {
  const checked = utc("2026-03-02T00:00:00Z");
  it.each([
    // domain.md §7.1, ASTM C511: a sensor with no check on record has not been verified.
    [null, checked, null, true, "no check on record"],
    [checked, utc("2026-09-01T23:59:59Z"), null, false, "one second before six months"],
    [checked, utc("2026-09-02T00:00:00Z"), null, true, "at six months"],
    // A due date QC set at the check (shorter than six months) governs.
    [
      checked,
      utc("2026-06-02T00:00:00Z"),
      utc("2026-06-01T00:00:00Z"),
      true,
      "past a shorter due date",
    ],
    [
      checked,
      utc("2026-05-31T00:00:00Z"),
      utc("2026-06-01T00:00:00Z"),
      false,
      "before a shorter due date",
    ],
  ] as [number | null, number, number | null, boolean, string][])(
    "last check %s, now %s, due %s -> %s (%s)",
    (last, now, due, overdue) => {
      expect(calibrationOverdue(last, now, due)).toBe(overdue);
    },
  );
});

describe("which sensors are held to the six-month check", () => {
  it.each([
    ["bag", "active", true],
    ["embedded", "active", true],
    ["ambient", "active", true],
    // Bins feed the batch-temperature estimate, not the cure record: never flagged.
    ["bin", "active", false],
    [null, "new", false],
    ["bag", "retired", false],
  ] as const)("%s sensor, %s: %s", (kind, status, required) => {
    expect(calibrationRequired(kind, status)).toBe(required);
  });
});

describe("calibration standing", () => {
  const checked = utc("2026-03-02T00:00:00Z");
  const due = nextCalibrationDue(checked);
  it.each([
    ["bin", null, checked, "exempt"],
    ["bag", null, checked, "never"],
    ["bag", { checkedAtMs: checked, nextDueAtMs: null }, checked + 86_400_000, "current"],
    ["bag", { checkedAtMs: checked, nextDueAtMs: null }, due - CALIBRATION_DUE_SOON_MS, "due_soon"],
    [
      "bag",
      { checkedAtMs: checked, nextDueAtMs: null },
      due - CALIBRATION_DUE_SOON_MS - 1,
      "current",
    ],
    ["embedded", { checkedAtMs: checked, nextDueAtMs: null }, due, "overdue"],
    ["ambient", { checkedAtMs: checked, nextDueAtMs: checked + 1000 }, checked + 1000, "overdue"],
  ] as const)("%s with %j at %d is %s", (kind, last, now, standing) => {
    expect(calibrationStanding(kind, "active", last, now)).toBe(standing);
  });
});

describe("offset from a check", () => {
  it.each([
    // Reference 20.0 °C, sensor reads 20.4 °C: the sensor reads high, so -0.4 °C is added.
    [20.0, 20.4, -0.4],
    [23.0, 22.5, 0.5],
    [20.4, 20.4, 0],
    [-5.25, -5.0, -0.25],
  ])("reference %d °C, sensor %d °C -> %d °C", (ref, sensor, offset) => {
    const got = offsetFromCheck(ref, sensor);
    expect(got).toBe(offset);
    expect(Object.is(got, -0)).toBe(false);
  });

  it("corrects the sensor's reading to the reference", () => {
    // The check's own case: 20.4 °C read, offset applied at ingest, stored as 20.0 °C.
    expect(20.4 + offsetFromCheck(20.0, 20.4)).toBe(20.0);
  });
});
