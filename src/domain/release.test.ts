import { describe, expect, it } from "vitest";
import {
  compareReadyTimes,
  decideRelease,
  placeOnReadyList,
  RELEASE_CAUTION,
  recordGaps,
  statusAfterRelease,
  type ReadyFacts,
  type ReleaseFacts,
} from "./release";

// Thresholds used below: a 3000 psi stripping strength, usual for precast wall panels
// (domain.md §7.4, ACI 533R §6.7), is 20.684272 MPa (domain.md §8.3, exact psi factor).
const STRIP_MPA = 20.684272;
// 5000 psi = 34.473786 MPa (domain.md §8.3), used as a shipping strength (common practice).
const SHIP_MPA = 34.473786;

const base: ReleaseFacts = {
  kind: "strip",
  pourStatus: "curing",
  released: [],
  calibrated: true,
  estimateMpa: 22,
  thresholdMpa: STRIP_MPA,
  completeRecord: true,
  overrideReason: null,
};

describe("the release decision", () => {
  // Each row: the facts that differ from `base`, then the outcome and the codes it gives.
  // Policy source for every row: the Plinth contract, POST /api/v1/pours/{id}/releases.
  const table: {
    name: string;
    facts: Partial<ReleaseFacts>;
    outcome: "allowed" | "needs-override" | "refused";
    codes: string[];
    warnings?: string[];
    nextStatus?: string;
  }[] = [
    {
      name: "a strip release at or above the threshold is allowed and strips the pour",
      facts: {},
      outcome: "allowed",
      codes: [],
      nextStatus: "stripped",
    },
    {
      name: "exactly at the threshold is allowed (at or above)",
      facts: { estimateMpa: STRIP_MPA },
      outcome: "allowed",
      codes: [],
      nextStatus: "stripped",
    },
    {
      name: "below the threshold needs an override reason",
      facts: { estimateMpa: 20.68 },
      outcome: "needs-override",
      codes: ["below-threshold"],
    },
    {
      name: "below the threshold with an override reason is allowed, and says it was overridden",
      facts: { estimateMpa: 15, overrideReason: "Cylinder breaks at 3,400 psi, engineer agreed" },
      outcome: "allowed",
      codes: ["below-threshold"],
      warnings: ["override"],
      nextStatus: "stripped",
    },
    {
      name: "a blank override reason is no reason",
      facts: { estimateMpa: 15, overrideReason: "   " },
      outcome: "needs-override",
      codes: ["below-threshold"],
    },
    {
      name: "a mix that is not calibrated needs an override",
      facts: { calibrated: false, estimateMpa: null },
      outcome: "needs-override",
      codes: ["not-calibrated"],
    },
    {
      name: "a calibrated mix with no sensor estimate needs an override",
      facts: { estimateMpa: null },
      outcome: "needs-override",
      codes: ["no-estimate"],
    },
    {
      name: "an incomplete record at the threshold is allowed with a warning",
      facts: { completeRecord: false },
      outcome: "allowed",
      codes: [],
      warnings: ["incomplete-record"],
      nextStatus: "stripped",
    },
    {
      name: "an incomplete record below the threshold needs an override and still warns",
      facts: { completeRecord: false, estimateMpa: 10 },
      outcome: "needs-override",
      codes: ["below-threshold"],
      warnings: ["incomplete-record"],
    },
    {
      name: "a second strip release is refused, override or not",
      facts: { released: ["strip"], pourStatus: "stripped", overrideReason: "again" },
      outcome: "refused",
      codes: ["already-released"],
    },
    {
      name: "a ship release after the strip release, at the ship strength, readies the pour",
      facts: {
        kind: "ship",
        released: ["strip"],
        pourStatus: "stripped",
        thresholdMpa: SHIP_MPA,
        estimateMpa: 35,
      },
      outcome: "allowed",
      codes: [],
      nextStatus: "ready_to_ship",
    },
    {
      name: "a ship release before any strip release needs an override",
      facts: { kind: "ship", thresholdMpa: SHIP_MPA, estimateMpa: 40 },
      outcome: "needs-override",
      codes: ["not-stripped"],
    },
    {
      name: "a ship release below the threshold and before the strip lists both reasons",
      facts: { kind: "ship", thresholdMpa: SHIP_MPA, estimateMpa: 30 },
      outcome: "needs-override",
      codes: ["below-threshold", "not-stripped"],
    },
    {
      name: "a ship release on override before the strip goes straight to ready to ship",
      facts: {
        kind: "ship",
        thresholdMpa: SHIP_MPA,
        estimateMpa: 40,
        overrideReason: "Stripped on paper",
      },
      outcome: "allowed",
      codes: ["not-stripped"],
      warnings: ["override"],
      nextStatus: "ready_to_ship",
    },
    {
      name: "a second ship release is refused",
      facts: { kind: "ship", released: ["strip", "ship"], pourStatus: "ready_to_ship" },
      outcome: "refused",
      codes: ["already-released"],
    },
    {
      name: "a shipped pour takes no release",
      facts: { pourStatus: "shipped" },
      outcome: "refused",
      codes: ["pour-closed"],
    },
    {
      name: "a void pour takes no release, even with an override",
      facts: { pourStatus: "void", overrideReason: "please" },
      outcome: "refused",
      codes: ["pour-closed"],
    },
  ];

  it.each(table)("$name", ({ facts, outcome, codes, warnings = [], nextStatus }) => {
    const d = decideRelease({ ...base, ...facts });
    expect(d.outcome).toBe(outcome);
    if (d.outcome === "refused") {
      expect([d.reason.code]).toEqual(codes);
      return;
    }
    const got = d.outcome === "allowed" ? d.overridden : d.reasons;
    expect(got.map((r) => r.code)).toEqual(codes);
    expect(d.warnings.map((w) => w.code)).toEqual(warnings);
    if (d.outcome === "allowed") expect(d.nextStatus).toBe(nextStatus);
    for (const r of got) expect(r.message.length).toBeGreaterThan(10);
  });

  it("keeps the statuses a release does not change", () => {
    // A strip release recorded after a ship override leaves the pour ready to ship.
    expect(statusAfterRelease("strip", "ready_to_ship")).toBe("ready_to_ship");
    expect(statusAfterRelease("ship", "ready_to_ship")).toBe("ready_to_ship");
    expect(statusAfterRelease("ship", "curing")).toBe("ready_to_ship");
  });

  it("words the caution so that it defers to the engineer of record and local codes", () => {
    expect(RELEASE_CAUTION).toMatch(/engineer of record/);
    expect(RELEASE_CAUTION).toMatch(/local codes/);
    expect(RELEASE_CAUTION).toMatch(/never replace/);
  });
});

describe("what is missing from a sensor's record", () => {
  const H = 3_600_000;
  const cast = 1_700_000_000_000;
  const every = (fromH: number, toH: number, stepH: number) => {
    const out: number[] = [];
    for (let h = fromH; h <= toH + 1e-9; h += stepH) out.push(cast + Math.round(h * H));
    return out;
  };

  // Gap rule: an interval over 2 hours adds nothing and makes the record incomplete (Plinth
  // contract, GET /api/v1/pours/{id}/strength); exactly 2 hours is not a gap.
  it("finds nothing in a record with readings every half hour", () => {
    expect(recordGaps(every(0, 10, 0.5), cast, cast + 10 * H)).toEqual([]);
  });

  it("does not count exactly 2 hours as a gap", () => {
    expect(recordGaps(every(0, 10, 2), cast, cast + 10 * H)).toEqual([]);
  });

  it("names a gap over 2 hours by its two ends, in any input order", () => {
    const times = [...every(0, 3, 0.5), ...every(6, 10, 0.5)].reverse();
    expect(recordGaps(times, cast, cast + 10 * H)).toEqual([
      { kind: "gap", fromMs: cast + 3 * H, toMs: cast + 6 * H },
    ]);
  });

  it("names a late start and a silent sensor", () => {
    expect(recordGaps(every(3, 5, 0.5), cast, cast + 8 * H)).toEqual([
      { kind: "late-start", fromMs: cast, toMs: cast + 3 * H },
      { kind: "silent", fromMs: cast + 5 * H, toMs: cast + 8 * H },
    ]);
  });

  it("ignores readings before cast and after the moment asked about", () => {
    const times = [cast - 5 * H, ...every(0, 4, 1), cast + 9 * H];
    expect(recordGaps(times, cast, cast + 5 * H)).toEqual([]);
  });

  it("says when there is no reading at all, once 2 hours have passed", () => {
    expect(recordGaps([], cast, cast + H)).toEqual([]);
    expect(recordGaps([], cast, cast + 3 * H)).toEqual([
      { kind: "no-readings", fromMs: cast, toMs: cast + 3 * H },
    ]);
  });
});

describe("the floor's ready list", () => {
  const none = { reachedAtMs: null, forecastAtMs: null };
  const f = (over: Partial<ReadyFacts>): ReadyFacts => ({
    status: "curing",
    releases: [],
    calibrated: true,
    hasSensors: true,
    strip: none,
    ship: none,
    ...over,
  });
  // Policy source: the product owner's brief ("operators see what is ready to strip and to
  // ship, soonest first"; uncalibrated pours listed apart).
  it.each([
    {
      name: "a curing pour past its strip strength is ready to strip",
      facts: f({ strip: { reachedAtMs: 100, forecastAtMs: null } }),
      want: { list: "ready_to_strip", next: "strip", sinceMs: 100, releasedAtMs: null },
    },
    {
      name: "a curing pour short of it is coming up at its forecast",
      facts: f({ strip: { reachedAtMs: null, forecastAtMs: 500 } }),
      want: { list: "coming_up", next: "strip", dueAtMs: 500 },
    },
    {
      name: "a stripped pour past its ship strength is ready to ship, awaiting sign-off",
      facts: f({
        status: "stripped",
        releases: [{ kind: "strip", atMs: 50 }],
        strip: { reachedAtMs: 40, forecastAtMs: null },
        ship: { reachedAtMs: 300, forecastAtMs: null },
      }),
      want: { list: "ready_to_ship", next: "ship", sinceMs: 300, releasedAtMs: null },
    },
    {
      name: "a stripped pour short of its ship strength is coming up for the ship",
      facts: f({ status: "stripped", ship: { reachedAtMs: null, forecastAtMs: 900 } }),
      want: { list: "coming_up", next: "ship", dueAtMs: 900 },
    },
    {
      name: "a pour signed off to ship stays ready to ship, from the earlier of reached and released",
      facts: f({
        status: "ready_to_ship",
        releases: [
          { kind: "strip", atMs: 50 },
          { kind: "ship", atMs: 350 },
        ],
        ship: { reachedAtMs: 300, forecastAtMs: null },
      }),
      want: { list: "ready_to_ship", next: "ship", sinceMs: 300, releasedAtMs: 350 },
    },
    {
      name: "a pour shipped on an override is ready to ship from its release",
      facts: f({
        status: "ready_to_ship",
        releases: [{ kind: "ship", atMs: 70 }],
        calibrated: false,
      }),
      want: { list: "ready_to_ship", next: "ship", sinceMs: 70, releasedAtMs: 70 },
    },
    {
      name: "a pour of an uncalibrated mix cannot be estimated",
      facts: f({ calibrated: false }),
      want: {
        list: "cannot_estimate",
        next: "strip",
        reason: "Cannot estimate: mix not calibrated",
      },
    },
    {
      name: "a pour with no sensor cannot be estimated",
      facts: f({ hasSensors: false }),
      want: {
        list: "cannot_estimate",
        next: "strip",
        reason: "Cannot estimate: no sensor on the pour",
      },
    },
    { name: "a shipped pour is on no list", facts: f({ status: "shipped" }), want: { list: null } },
    { name: "a void pour is on no list", facts: f({ status: "void" }), want: { list: null } },
  ])("$name", ({ facts, want }) => {
    expect(placeOnReadyList(facts)).toEqual(want);
  });

  it("sorts soonest first, with no time last", () => {
    expect([300, null, 100, 200].sort(compareReadyTimes)).toEqual([100, 200, 300, null]);
  });
});
