import { describe, expect, it } from "vitest";
import {
  digestRecipients,
  escalationDeliveries,
  firstDeliveries,
  noticeNow,
  type Person,
} from "./recipients";

// Who is told is Plinth's own policy (common practice for on-call alarms: the person on duty
// by text, the people who answer for quality by e-mail, nobody left untold).

const person = (id: number, role: Person["role"], over: Partial<Person> = {}): Person => ({
  id,
  name: `P${id}`,
  role,
  email: `p${id}@example.com`,
  phone: `+1555010000${id}`,
  wantsSms: true,
  wantsEmail: true,
  wantsDigest: role === "qc" || role === "manager",
  units: "us",
  ...over,
});

const manager = person(1, "manager");
const qc = person(2, "qc");
const op = person(3, "operator");
const op2 = person(4, "operator");
const viewer = person(5, "viewer");
const staff = [manager, qc, op, op2, viewer];

const summary = (ds: { person: Person; channel: string }[]) =>
  ds.map((d) => `${d.person.id}:${d.channel}`).sort();

describe("who hears of a new episode", () => {
  it("texts the first person on call and e-mails QC and managers", () => {
    const ds = firstDeliveries({
      audience: "on_call",
      severity: "critical",
      onCall: [op, op2],
      staff,
    });
    expect(summary(ds)).toEqual(["1:email", "2:email", "3:sms"]);
  });

  it("e-mails the person on call who has no phone or takes no texts", () => {
    const noPhone = person(3, "operator", { phone: null });
    expect(
      summary(
        firstDeliveries({ audience: "on_call", severity: "warning", onCall: [noPhone], staff }),
      ),
    ).toContain("3:email");
    const noTexts = person(3, "operator", { wantsSms: false });
    expect(
      summary(
        firstDeliveries({ audience: "on_call", severity: "warning", onCall: [noTexts], staff }),
      ),
    ).toContain("3:email");
  });

  it("texts the managers when nobody is on call", () => {
    const ds = firstDeliveries({ audience: "on_call", severity: "critical", onCall: [], staff });
    expect(summary(ds)).toEqual(["1:email", "1:sms", "2:email"]);
  });

  it("e-mails only QC and managers for a quality rule, and nobody at once for the digest", () => {
    expect(
      summary(firstDeliveries({ audience: "quality", severity: "info", onCall: [op], staff })),
    ).toEqual(["1:email", "2:email"]);
    expect(
      firstDeliveries({ audience: "digest", severity: "critical", onCall: [op], staff }),
    ).toEqual([]);
    expect(noticeNow("on_call", "info")).toBe(false);
    expect(noticeNow("quality", "info")).toBe(true);
  });

  it("respects a person who turned e-mail off", () => {
    const quietQc = person(2, "qc", { wantsEmail: false });
    const ds = firstDeliveries({
      audience: "quality",
      severity: "warning",
      onCall: [],
      staff: [manager, quietQc],
    });
    expect(summary(ds)).toEqual(["1:email"]);
  });
});

describe("escalation", () => {
  it("goes down the rota one person a level, then to the managers once, then stops", () => {
    const onCall = [op, op2];
    expect(summary(escalationDeliveries({ level: 1, onCall, staff })!)).toEqual(["4:sms"]);
    expect(summary(escalationDeliveries({ level: 2, onCall, staff })!)).toEqual(["1:sms"]);
    expect(escalationDeliveries({ level: 3, onCall, staff })).toBeNull();
    expect(escalationDeliveries({ level: 0, onCall, staff })).toBeNull();
  });

  it("with one person on call, escalates straight to the managers", () => {
    expect(summary(escalationDeliveries({ level: 1, onCall: [op], staff })!)).toEqual(["1:sms"]);
    expect(escalationDeliveries({ level: 2, onCall: [op], staff })).toBeNull();
  });
});

describe("the digest", () => {
  it("goes by e-mail to those who want it", () => {
    const opWants = person(3, "operator", { wantsDigest: true });
    expect(summary(digestRecipients([manager, qc, opWants, op2, viewer]))).toEqual([
      "1:email",
      "2:email",
      "3:email",
    ]);
  });
});
