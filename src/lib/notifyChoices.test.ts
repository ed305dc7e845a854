import { describe, expect, it } from "vitest";
import { mergeNotifyChoices, readNotifyChoices } from "./notifyChoices";

// Plinth's own rule (this module's doc): a missing digest is on for QC and managers, off for
// operators and viewers; a missing or unreadable channel is on.
describe("a person's alert channels", () => {
  it.each([
    ['{"sms":true,"email":true}', "qc", { sms: true, email: true, digest: true }],
    ['{"sms":true,"email":true}', "manager", { sms: true, email: true, digest: true }],
    ['{"sms":true,"email":true}', "operator", { sms: true, email: true, digest: false }],
    ['{"sms":false,"email":true}', "viewer", { sms: false, email: true, digest: false }],
    ['{"sms":true,"email":false,"digest":false}', "qc", { sms: true, email: false, digest: false }],
    ['{"digest":true}', "operator", { sms: true, email: true, digest: true }],
    ["not json", "operator", { sms: true, email: true, digest: false }],
    ["[1,2]", "manager", { sms: true, email: true, digest: true }],
    ['{"sms":"yes"}', "operator", { sms: true, email: true, digest: false }],
  ] as const)("reads %s for a %s", (json, role, expected) => {
    expect(readNotifyChoices(json, role)).toEqual(expected);
  });

  it("writes only the choices changed, so an unchosen digest keeps following the role", () => {
    const stored = mergeNotifyChoices('{"sms":true,"email":true}', { sms: false });
    expect(JSON.parse(stored)).toEqual({ sms: false, email: true });
    expect(readNotifyChoices(stored, "qc").digest).toBe(true);
    expect(readNotifyChoices(stored, "operator").digest).toBe(false);
    const chosen = mergeNotifyChoices(stored, { digest: true, email: undefined });
    expect(JSON.parse(chosen)).toEqual({ sms: false, email: true, digest: true });
  });

  it("keeps keys it does not know", () => {
    expect(JSON.parse(mergeNotifyChoices('{"quiet_hours":[22,6]}', { email: false }))).toEqual({
      quiet_hours: [22, 6],
      email: false,
    });
  });
});
