import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { decideNotice, judge, quietTrack, runEpisodes, type RuleLimits } from "./episode";

const MIN = 60_000;
// Moist curing asks for RH ≥ 95 % (domain.md §7.1, ASTM C511); hold 15 min and clear 1 % above (Plinth defaults, common practice).
const dry: RuleLimits = {
  kind: "rh_low",
  threshold: 95,
  thresholdHigh: null,
  holdMs: 15 * MIN,
  clearMargin: 1,
};
const obs = (values: number[], stepMs = MIN, t0 = 0) =>
  values.map((value, i) => ({ tsMs: t0 + i * stepMs, value }));

describe("judging a value", () => {
  // domain.md §7.1 alert vectors: 94 % → RH alarm; 95 % → OK (boundary inclusive).
  it("breaks the moist-curing rule below 95 % and not at 95 %", () => {
    expect(judge(dry, 94)).toBe("breach");
    expect(judge(dry, 95)).toBe("between");
    expect(judge(dry, 96)).toBe("clear");
  });
  // domain.md §7.5: rise 20 °C/h OK, 23 °C/h alarm with the 22 °C/h limit (PCI MNL-116, from memory).
  it("breaks the rate-of-rise rule at 23 °C/h and not at 20 °C/h", () => {
    const rise: RuleLimits = {
      kind: "rate_rise",
      threshold: 22,
      thresholdHigh: null,
      holdMs: 0,
      clearMargin: 1,
    };
    expect(judge(rise, 23)).toBe("breach");
    expect(judge(rise, 20)).toBe("clear");
  });
  it("judges a bin outside its range either way", () => {
    const bin: RuleLimits = {
      kind: "bin_range",
      threshold: 2,
      thresholdHigh: 32,
      holdMs: 0,
      clearMargin: 1,
    };
    expect(judge(bin, 1.9)).toBe("breach");
    expect(judge(bin, 32.1)).toBe("breach");
    expect(judge(bin, 2.5)).toBe("between");
    expect(judge(bin, 20)).toBe("clear");
  });
});

describe("an episode", () => {
  it("opens only once the condition has held for the hold time, dated from its start", () => {
    const r = runEpisodes(
      quietTrack,
      obs([97, 94, 93, 93, 93, 93, 93, 93, 93, 93, 93, 93, 93, 93, 93, 93, 93]),
      dry,
    );
    const opened = r.events.filter((e) => e.type === "opened");
    expect(opened).toHaveLength(1);
    expect(opened[0]).toMatchObject({ startedAtMs: 1 * MIN, openedAtMs: 16 * MIN, worst: 93 });
  });

  it("does not open for a dip shorter than the hold", () => {
    expect(runEpisodes(quietTrack, obs([97, 94, 94, 94, 97, 97]), dry).events).toEqual([]);
  });

  it("makes one episode of a value hovering at the limit", () => {
    const hover = [
      97,
      ...Array.from({ length: 20 }, () => 93),
      ...Array.from({ length: 60 }, (_, i) => (i % 2 ? 94.8 : 95.3)),
    ];
    const r = runEpisodes(quietTrack, obs(hover), dry);
    expect(r.events.filter((e) => e.type === "opened")).toHaveLength(1);
    expect(r.events.filter((e) => e.type === "cleared")).toHaveLength(0);
  });

  it("clears after the value has been clear by the margin for the hold time", () => {
    const values = [
      ...Array.from({ length: 20 }, () => 90),
      ...Array.from({ length: 20 }, () => 97),
    ];
    const r = runEpisodes(quietTrack, obs(values), dry);
    const cleared = r.events.find((e) => e.type === "cleared");
    expect(cleared).toMatchObject({ clearedAtMs: 35 * MIN, worst: 90 });
    expect(r.track.phase).toBe("quiet");
  });

  it("raises what a late backlog shows, on the readings' own time", () => {
    // Three hours late, all at once: the episode still opens at reading time 16 min.
    const backlog = obs(
      Array.from({ length: 30 }, () => 90),
      MIN,
      0,
    );
    const r = runEpisodes(quietTrack, backlog.reverse(), dry);
    expect(r.events[0]).toMatchObject({ type: "opened", startedAtMs: 0, openedAtMs: 15 * MIN });
  });

  it("gives the same episodes however a stream is cut into batches", () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 80, max: 100, noNaN: true }), { maxLength: 200 }),
        fc.integer({ min: 1, max: 50 }),
        (values, cut) => {
          const all = obs(values);
          const whole = runEpisodes(quietTrack, all, dry);
          let track = quietTrack;
          const events = [];
          for (let i = 0; i < all.length; i += cut) {
            const r = runEpisodes(track, all.slice(i, i + cut), dry);
            track = r.track;
            events.push(...r.events);
          }
          expect(events).toEqual(whole.events);
          expect(track).toEqual(whole.track);
        },
      ),
    );
  });
});

describe("who is told", () => {
  const base = {
    severity: "warning" as const,
    nowMs: 0,
    lastNotifiedAtMs: null,
    escalateAfterMs: 10 * MIN,
    notifiedOnOpen: true,
  };
  it("tells on opening, but not about an episode already over in the same backlog", () => {
    expect(decideNotice({ ...base, event: "opened", state: "open" })).toBe("first");
    expect(
      decideNotice({ ...base, event: "opened", state: "cleared", clearedInSameBatch: true }),
    ).toBe("none");
  });
  it("escalates an episode left unacknowledged past its time, and not an acknowledged one", () => {
    expect(
      decideNotice({ ...base, event: "tick", state: "open", nowMs: 10 * MIN, lastNotifiedAtMs: 0 }),
    ).toBe("escalate");
    expect(
      decideNotice({ ...base, event: "tick", state: "open", nowMs: 9 * MIN, lastNotifiedAtMs: 0 }),
    ).toBe("none");
    expect(
      decideNotice({
        ...base,
        event: "tick",
        state: "acknowledged",
        nowMs: 60 * MIN,
        lastNotifiedAtMs: 0,
      }),
    ).toBe("none");
  });
  it("says it is over when it told about the start", () => {
    expect(decideNotice({ ...base, event: "cleared", state: "cleared" })).toBe("cleared");
    expect(
      decideNotice({ ...base, event: "cleared", state: "cleared", notifiedOnOpen: false }),
    ).toBe("none");
  });
});
