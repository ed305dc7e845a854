import { describe, expect, it } from "vitest";
import { fromPlantInput, toPlantInput } from "./plantTime";

// US time zone rules (common practice: the Energy Policy Act of 2005 schedule): in 2026 daylight
// time starts on Sunday 8 March at 2:00 local; America/Chicago is UTC−6 before, UTC−5 after.
describe("plant wall-clock times", () => {
  it("reads a time before the change as UTC−6 and after it as UTC−5", () => {
    expect(fromPlantInput("2026-03-07T22:00", "America/Chicago")).toBe(Date.UTC(2026, 2, 8, 4, 0));
    expect(fromPlantInput("2026-03-08T03:30", "America/Chicago")).toBe(Date.UTC(2026, 2, 8, 8, 30));
  });
  it("writes an instant back as the plant's wall clock", () => {
    expect(toPlantInput(Date.UTC(2026, 2, 8, 9, 30), "America/Chicago")).toBe("2026-03-08T04:30");
    expect(toPlantInput(Date.UTC(2026, 2, 2, 4, 10), "UTC")).toBe("2026-03-02T04:10");
  });
  it("refuses text that is not a time", () => {
    expect(fromPlantInput("", "UTC")).toBeNull();
    expect(fromPlantInput("tomorrow", "UTC")).toBeNull();
  });
});
