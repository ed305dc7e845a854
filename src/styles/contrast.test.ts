import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";

// WCAG 2.1 SC 1.4.3 (contrast, minimum): text needs 4.5:1 against its background; the
// relative luminance and contrast ratio formulas are those of WCAG 2.1 §"relative luminance".
const css = fs.readFileSync(path.join(import.meta.dirname, "global.css"), "utf8");

function tokens(selector: string): Record<string, string> {
  const start = css.indexOf(selector);
  const block = css.slice(css.indexOf("{", start) + 1, css.indexOf("}", start));
  return Object.fromEntries(
    [...block.matchAll(/--c-([a-z0-9-]+):\s*(#[0-9a-f]{6})/gi)].map((m) => [m[1]!, m[2]!]),
  );
}

function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5]
    .map((i) => parseInt(hex.slice(i, i + 2), 16) / 255)
    .map((c) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4)) as [
    number,
    number,
    number,
  ];
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

function contrast(a: string, b: string): number {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x) as [number, number];
  return (hi + 0.05) / (lo + 0.05);
}

const pairs: [string, string][] = [
  ["text", "bg"],
  ["text", "surface"],
  ["text", "surface-2"],
  ["muted", "bg"],
  ["muted", "surface"],
  ["muted", "surface-2"],
  ["accent", "bg"],
  ["accent", "surface"],
  ["on-accent", "accent"],
  ["ok", "ok-bg"],
  ["warn", "warn-bg"],
  ["alarm", "alarm-bg"],
  ["alarm", "surface"],
  ["accent", "info-bg"],
  ["text", "info-bg"],
];

describe("colour contrast (WCAG 2.1 AA, 4.5:1 for text)", () => {
  // WCAG 2.1 worked values: black on white is 21:1, white on white 1:1.
  it("computes the WCAG ratio", () => {
    expect(contrast("#000000", "#ffffff")).toBeCloseTo(21, 6);
    expect(contrast("#ffffff", "#ffffff")).toBeCloseTo(1, 6);
  });

  for (const [theme, selector] of [
    ["light", ":root {"],
    ["dark", ':root[data-theme="dark"]'],
  ] as const) {
    const t = tokens(selector);
    it.each(pairs)(`${theme}: %s on %s reaches 4.5:1`, (fg, bg) => {
      expect(t[fg], fg).toMatch(/^#[0-9a-f]{6}$/i);
      expect(t[bg], bg).toMatch(/^#[0-9a-f]{6}$/i);
      expect(contrast(t[fg]!, t[bg]!)).toBeGreaterThanOrEqual(4.5);
    });
  }

  it("defines the same dark tokens for the device setting and the explicit choice", () => {
    const media = css.slice(css.indexOf("@media (prefers-color-scheme: dark)"));
    expect(tokens(':root:not([data-theme="light"])')).toEqual(tokens(':root[data-theme="dark"]'));
    expect(media.length).toBeGreaterThan(0);
  });
});
