import { describe, expect, it } from "vitest";
import {
  allowedTransitions,
  checkTransition,
  isOpenStatus,
  pourStatuses,
  type LifecycleFacts,
  type PourStatus,
} from "./pourLifecycle";

// The lifecycle is Plinth's own rule (the product owner's): curing → stripped → ready to ship →
// shipped, void with a reason, strip and ship only after QC's release. No outside source fixes
// these transitions; the checks below pin the rule down case by case.
const none: LifecycleFacts = { hasStripRelease: false, hasShipRelease: false };
const strip: LifecycleFacts = { hasStripRelease: true, hasShipRelease: false };
const both: LifecycleFacts = { hasStripRelease: true, hasShipRelease: true };

describe("a pour's status moves", () => {
  it.each<[PourStatus, PourStatus, LifecycleFacts, boolean]>([
    ["curing", "stripped", strip, true],
    ["curing", "stripped", none, false],
    ["stripped", "ready_to_ship", both, true],
    ["stripped", "ready_to_ship", strip, false],
    ["ready_to_ship", "shipped", both, true],
    ["ready_to_ship", "shipped", strip, false],
    // A pour shipped straight from the bed still needs its ship release.
    ["curing", "shipped", both, true],
    ["curing", "shipped", strip, false],
    // A ship release rests on a higher strength than stripping needs.
    ["curing", "stripped", { hasStripRelease: false, hasShipRelease: true }, true],
    // Never back.
    ["stripped", "curing", both, false],
    ["ready_to_ship", "stripped", both, false],
    ["shipped", "ready_to_ship", both, false],
  ])("from %s to %s (releases %o): allowed is %s", (from, to, facts, ok) => {
    expect(checkTransition(from, to, facts).ok).toBe(ok);
  });

  it("refuses shipped without a ship release, saying a ship release is needed", () => {
    const r = checkTransition("ready_to_ship", "shipped", strip);
    expect(r).toMatchObject({ ok: false, refusal: "needs_ship_release" });
    if (!r.ok) expect(r.message).toMatch(/ship release/);
  });

  it("refuses stripped without any release, saying a strip release is needed", () => {
    expect(checkTransition("curing", "stripped", none)).toMatchObject({
      ok: false,
      refusal: "needs_strip_release",
    });
  });

  it("voids an open pour only with a reason that is not blank", () => {
    for (const from of ["curing", "stripped", "ready_to_ship"] as const) {
      expect(checkTransition(from, "void", none, "cast on the wrong bed").ok).toBe(true);
      expect(checkTransition(from, "void", none, "   ")).toMatchObject({
        ok: false,
        refusal: "needs_reason",
      });
      expect(checkTransition(from, "void", none)).toMatchObject({ refusal: "needs_reason" });
    }
  });

  it("keeps shipped and void final", () => {
    for (const from of ["shipped", "void"] as const) {
      for (const to of pourStatuses.filter((s) => s !== from)) {
        expect(checkTransition(from, to, both, "a reason")).toMatchObject({
          ok: false,
          refusal: "final",
        });
      }
    }
  });

  it("refuses a move to the status the pour already has", () => {
    expect(checkTransition("curing", "curing", both)).toMatchObject({ ok: false, refusal: "same" });
  });
});

describe("the moves a page offers", () => {
  it("offers only void to a curing pour with no release", () => {
    expect(allowedTransitions("curing", none)).toEqual(["void"]);
  });
  it("offers stripped and void after a strip release", () => {
    expect(allowedTransitions("curing", strip)).toEqual(["stripped", "void"]);
  });
  it("offers every forward step and void after a ship release", () => {
    expect(allowedTransitions("stripped", both)).toEqual(["ready_to_ship", "shipped", "void"]);
    expect(allowedTransitions("ready_to_ship", both)).toEqual(["shipped", "void"]);
  });
  it("offers nothing once shipped or void", () => {
    expect(allowedTransitions("shipped", both)).toEqual([]);
    expect(allowedTransitions("void", both)).toEqual([]);
  });
  it("counts curing, stripped and ready to ship as open", () => {
    expect(pourStatuses.filter(isOpenStatus)).toEqual(["curing", "stripped", "ready_to_ship"]);
  });
});
