import { describe, expect, it } from "vitest";
import {
  describeRefusal,
  planAssignments,
  planEnds,
  type ExistingAssignment,
  type KnownSensor,
} from "./assignments";

// Plinth's rule (common practice in a cure room): one sensor watches one pour at a time, so no
// reading counts toward two pours' maturity. No outside source; each case pins the rule down.
const H = 3_600_000;
const known = new Map<string, KnownSensor>(
  [
    { id: "CB-01", kind: "bag", status: "active" },
    { id: "CB-02", kind: "bag", status: "active" },
    { id: "EP-01", kind: "embedded", status: "new" },
    { id: "AB-01", kind: "bin", status: "active" },
    { id: "CB-99", kind: "bag", status: "retired" },
  ].map((s) => [s.id, s as KnownSensor]),
);
const onOther: ExistingAssignment = {
  assignmentId: 7,
  sensorId: "CB-01",
  pourId: 2,
  pourCode: "P-2",
  pourOpen: true,
  fromMs: 10 * H,
  toMs: null,
};

describe("putting sensors on a pour", () => {
  it("plans a free sensor with no moves", () => {
    expect(
      planAssignments({
        pourId: 1,
        requested: [{ sensorId: "CB-02", fromMs: 20 * H }],
        known,
        existing: [onOther],
        move: false,
      }),
    ).toEqual({ ok: true, moves: [] });
  });

  it("refuses ids never seen, listing them all", () => {
    const plan = planAssignments({
      pourId: 1,
      requested: [
        { sensorId: "ZZ-1", fromMs: 0 },
        { sensorId: "CB-02", fromMs: 0 },
        { sensorId: "ZZ-2", fromMs: 0 },
      ],
      known,
      existing: [],
      move: false,
    });
    expect(plan).toEqual({ ok: false, refusal: { kind: "unknown", sensors: ["ZZ-1", "ZZ-2"] } });
    if (!plan.ok) expect(describeRefusal(plan.refusal)).toMatch(/ZZ-1 and ZZ-2.*register/);
  });

  it("refuses retired and aggregate-bin sensors", () => {
    const plan = planAssignments({
      pourId: 1,
      requested: [
        { sensorId: "CB-99", fromMs: 0 },
        { sensorId: "AB-01", fromMs: 0 },
      ],
      known,
      existing: [],
      move: false,
    });
    expect(plan.ok).toBe(false);
    if (!plan.ok) expect(plan.refusal.kind).toBe("unsuitable");
  });

  it("refuses a sensor on another open pour unless asked to move it", () => {
    const plan = planAssignments({
      pourId: 1,
      requested: [{ sensorId: "CB-01", fromMs: 20 * H }],
      known,
      existing: [onOther],
      move: false,
    });
    expect(plan).toEqual({
      ok: false,
      refusal: { kind: "busy", sensors: [{ sensor: "CB-01", pourCode: "P-2" }] },
    });
  });

  it("moves it with move, ending the other assignment where the new one starts", () => {
    expect(
      planAssignments({
        pourId: 1,
        requested: [{ sensorId: "CB-01", fromMs: 20 * H }],
        known,
        existing: [onOther],
        move: true,
      }),
    ).toEqual({
      ok: true,
      moves: [{ assignmentId: 7, sensorId: "CB-01", pourId: 2, pourCode: "P-2", endMs: 20 * H }],
    });
  });

  it("refuses a move that would start before the sensor went on the other pour", () => {
    const plan = planAssignments({
      pourId: 1,
      requested: [{ sensorId: "CB-01", fromMs: 5 * H }],
      known,
      existing: [onOther],
      move: true,
    });
    expect(plan.ok).toBe(false);
    if (!plan.ok) expect(plan.refusal.kind).toBe("overlap");
  });

  it("lets a sensor left open on a shipped pour go on a new one", () => {
    expect(
      planAssignments({
        pourId: 1,
        requested: [{ sensorId: "CB-01", fromMs: 20 * H }],
        known,
        existing: [{ ...onOther, pourOpen: false }],
        move: false,
      }),
    ).toEqual({ ok: true, moves: [] });
  });

  it("refuses a window that starts inside an ended one, so no reading counts twice", () => {
    const ended = { ...onOther, toMs: 30 * H };
    const early = planAssignments({
      pourId: 1,
      requested: [{ sensorId: "CB-01", fromMs: 25 * H }],
      known,
      existing: [ended],
      move: false,
    });
    expect(early.ok).toBe(false);
    if (!early.ok) expect(early.refusal.kind).toBe("overlap");
    const after = planAssignments({
      pourId: 1,
      requested: [{ sensorId: "CB-01", fromMs: 30 * H }],
      known,
      existing: [ended],
      move: false,
    });
    expect(after.ok).toBe(true);
  });

  it("refuses a sensor already on this pour", () => {
    const plan = planAssignments({
      pourId: 2,
      requested: [{ sensorId: "CB-01", fromMs: 20 * H }],
      known,
      existing: [onOther],
      move: true,
    });
    expect(plan).toEqual({ ok: false, refusal: { kind: "already", sensors: ["CB-01"] } });
  });
});

describe("taking sensors off a pour", () => {
  it("ends a sensor that is on the pour", () => {
    expect(
      planEnds({
        pourId: 2,
        requested: [{ sensorId: "CB-01", atMs: 40 * H }],
        existing: [onOther],
      }),
    ).toEqual({ ok: true, ends: [{ assignmentId: 7, sensorId: "CB-01", endMs: 40 * H }] });
  });
  it("refuses a sensor that is not on the pour", () => {
    const plan = planEnds({
      pourId: 1,
      requested: [{ sensorId: "CB-01", atMs: 40 * H }],
      existing: [onOther],
    });
    expect(plan).toMatchObject({ ok: false });
    if (!plan.ok) expect(plan.message).toMatch(/CB-01 is not on this pour/);
  });
  it("refuses an end before the sensor went on", () => {
    expect(
      planEnds({ pourId: 2, requested: [{ sensorId: "CB-01", atMs: 9 * H }], existing: [onOther] }),
    ).toMatchObject({ ok: false });
  });
});
