/**
 * The printable cure report of one pour, drawn with pdfkit: the plant, the pour and its pieces,
 * the mix with its calibration, a temperature chart and a strength-over-time chart drawn as
 * vector paths, the sensors' maturity, cylinder breaks, releases with their sign-offs, alert
 * episodes, the caution, and on every page the page number and the time it was made. Units
 * follow the reader; the standard Helvetica faces keep the file small and need no font files.
 */
import PDFDocument from "pdfkit";
import { ackViaWords, alertValueText, severityLook } from "@/domain/alerts/episodeWords";
import { breakToEstimateRatio, displayDatum } from "@/domain/history";
import { cToF, mpaToPsi, type UnitSystem } from "@/domain/units";
import { formatDateTime } from "@/lib/format";
import type { PourHistoryData } from "./data";
import {
  CURE_CAUTION,
  GAP_NOTE,
  episodeStateLabels,
  hoursText,
  milestoneText,
  modelLabels,
  productsText,
  releaseKindLabels,
  sensorKindLabels,
  statusLabels,
  strengthText,
  tempText,
  ttfText,
} from "./present";

type Doc = InstanceType<typeof PDFDocument>;

const PAGE = { width: 612, height: 792 }; // US Letter, points
const MARGIN = 48;
const CONTENT_W = PAGE.width - 2 * MARGIN;
const BOTTOM = PAGE.height - MARGIN - 18; // room for the footer
const INK = "#1d1f21";
const MUTED = "#55595e";
const LINE = "#c9c5bc";
const ACCENT = "#1f4f8f";
const ALARM = "#a1121b";
const WARN = "#8a4b00";
/** Sensor lines: colour and dash together, so a black-and-white print still tells them apart. */
const SERIES_STYLES: { color: string; dash: [number, number] | null }[] = [
  { color: "#1f4f8f", dash: null },
  { color: "#b4531f", dash: [5, 2] },
  { color: "#2e7d4f", dash: [1.5, 1.5] },
  { color: "#7a3e9d", dash: [7, 2] },
  { color: "#8a6d00", dash: [3, 3] },
  { color: "#0f7c8c", dash: [9, 3] },
  { color: "#a1121b", dash: [2, 4] },
  { color: "#4d5b6a", dash: [6, 4] },
];

const WIN_ANSI_EXTRA = new Set("€‚ƒ„…†‡ˆ‰Š‹ŒŽ‘’“”•–—˜™š›œžŸ");
const REPLACEMENTS: Record<string, string> = {
  "≥": ">=",
  "≤": "<=",
  "−": "-",
  "→": "->",
  "\u202f": " ",
  "\u2009": " ",
};

/**
 * Text the standard PDF fonts can show: their WinAnsi encoding covers Latin-1 and a few
 * typographic marks; anything else (a person's note may hold it) becomes a near word or "?".
 */
export function pdfText(s: string): string {
  let out = "";
  for (const ch of s) {
    const code = ch.codePointAt(0)!;
    if (REPLACEMENTS[ch] !== undefined) out += REPLACEMENTS[ch];
    else if ((code >= 0x20 && code <= 0x7e) || (code >= 0xa0 && code <= 0xff)) out += ch;
    else if (WIN_ANSI_EXTRA.has(ch)) out += ch;
    else if (ch === "\n") out += "\n";
    else if (ch === "\t" || ch === "\r") out += " ";
    else out += "?";
  }
  return out;
}

interface Ctx {
  doc: Doc;
  data: PourHistoryData;
  units: UnitSystem;
  tz: string;
}

const when = (ctx: Ctx, ms: number | null) =>
  ms === null ? "—" : formatDateTime(ms, ctx.tz, "short");

function ensureRoom(ctx: Ctx, height: number): void {
  if (ctx.doc.y + height > BOTTOM) {
    ctx.doc.addPage();
    ctx.doc.y = MARGIN;
  }
}

/** A section heading, kept on the same page as at least the start of what follows it. */
function heading(ctx: Ctx, text: string): void {
  const { doc } = ctx;
  ensureRoom(ctx, 110);
  doc.moveDown(0.6);
  doc.font("Helvetica-Bold").fontSize(12).fillColor(INK).text(pdfText(text), MARGIN, doc.y);
  const y = doc.y + 2;
  doc
    .moveTo(MARGIN, y)
    .lineTo(MARGIN + CONTENT_W, y)
    .lineWidth(0.5)
    .strokeColor(LINE)
    .stroke();
  doc.y = y + 6;
}

function note(ctx: Ctx, text: string, color = MUTED): void {
  ctx.doc.font("Helvetica").fontSize(8.5).fillColor(color);
  ctx.doc.text(pdfText(text), MARGIN, ctx.doc.y, { width: CONTENT_W });
}

/** Label-value pairs in a column starting at x. */
function pairs(ctx: Ctx, x: number, y: number, width: number, rows: [string, string][]): number {
  const { doc } = ctx;
  const labelW = 104;
  for (const [label, value] of rows) {
    doc.font("Helvetica").fontSize(8.5).fillColor(MUTED);
    doc.text(pdfText(label), x, y, { width: labelW });
    doc.font("Helvetica").fontSize(9).fillColor(INK);
    doc.text(pdfText(value), x + labelW, y, { width: width - labelW });
    y = Math.max(doc.y, y + 11) + 2;
  }
  return y;
}

interface Column {
  header: string;
  width: number;
  align?: "left" | "right";
}

/** A table that breaks across pages, repeating its header. */
function table(ctx: Ctx, columns: Column[], rows: string[][]): void {
  const { doc } = ctx;
  const total = columns.reduce((s, c) => s + c.width, 0);
  const scale = CONTENT_W / total;
  const widths = columns.map((c) => c.width * scale);
  const pad = 3;
  const drawHeader = () => {
    doc.font("Helvetica-Bold").fontSize(8).fillColor(MUTED);
    let x = MARGIN;
    let h = 0;
    columns.forEach((c, i) => {
      const w = widths[i]! - 2 * pad;
      h = Math.max(h, doc.heightOfString(pdfText(c.header), { width: w }));
    });
    const y = doc.y;
    columns.forEach((c, i) => {
      doc.text(pdfText(c.header), x + pad, y + pad, {
        width: widths[i]! - 2 * pad,
        align: c.align ?? "left",
      });
      x += widths[i]!;
    });
    const bottom = y + h + 2 * pad;
    doc
      .moveTo(MARGIN, bottom)
      .lineTo(MARGIN + CONTENT_W, bottom)
      .lineWidth(0.75)
      .strokeColor(INK)
      .stroke();
    doc.y = bottom;
  };
  ensureRoom(ctx, 40);
  drawHeader();
  for (const row of rows) {
    doc.font("Helvetica").fontSize(8.5);
    const h =
      Math.max(
        ...row.map((cell, i) => doc.heightOfString(pdfText(cell), { width: widths[i]! - 2 * pad })),
      ) +
      2 * pad;
    if (doc.y + h > BOTTOM) {
      doc.addPage();
      doc.y = MARGIN;
      drawHeader();
    }
    const y = doc.y;
    let x = MARGIN;
    doc.fillColor(INK);
    row.forEach((cell, i) => {
      doc.text(pdfText(cell), x + pad, y + pad, {
        width: widths[i]! - 2 * pad,
        align: columns[i]!.align ?? "left",
      });
      x += widths[i]!;
    });
    doc
      .moveTo(MARGIN, y + h)
      .lineTo(MARGIN + CONTENT_W, y + h)
      .lineWidth(0.4)
      .strokeColor(LINE)
      .stroke();
    doc.y = y + h;
  }
  doc.x = MARGIN;
}

/** Round numbers for an axis: about `count` ticks covering [min, max]. */
function niceTicks(min: number, max: number, count = 5): number[] {
  if (!(max > min)) return [min];
  const raw = (max - min) / count;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
  const out: number[] = [];
  for (let v = Math.ceil(min / step) * step; v <= max + 1e-9; v += step)
    out.push(Number(v.toFixed(6)));
  return out;
}

interface Line {
  name: string;
  xs: number[];
  ys: (number | null)[];
  color: string;
  dash: [number, number] | null;
  width: number;
}

interface ChartSpec {
  title: string;
  yUnit: string;
  fromMs: number;
  toMs: number;
  lines: Line[];
  /** Horizontal reference lines (thresholds). */
  levels: { y: number; label: string; color: string }[];
  /** Vertical markers (release times). */
  marks: { x: number; label: string; color: string }[];
  yMin?: number;
}

/** A line chart drawn as vector paths, with its time axis in the plant's time zone. */
function chart(ctx: Ctx, spec: ChartSpec): void {
  const { doc } = ctx;
  const height = 150;
  ensureRoom(ctx, height + 60);
  doc.font("Helvetica-Bold").fontSize(9.5).fillColor(INK).text(pdfText(spec.title), MARGIN, doc.y);
  const top = doc.y + 24;
  const left = MARGIN + 38;
  const right = MARGIN + CONTENT_W - 4;
  const bottom = top + height;
  const values = spec.lines.flatMap((l) => l.ys.filter((v): v is number => v !== null));
  values.push(...spec.levels.map((l) => l.y));
  let yMin = spec.yMin ?? (values.length ? Math.min(...values) : 0);
  let yMax = values.length ? Math.max(...values) : 1;
  if (!(yMax > yMin)) yMax = yMin + 1;
  const padY = (yMax - yMin) * 0.06;
  if (spec.yMin === undefined) yMin -= padY;
  yMax += padY;
  const from = spec.fromMs;
  const to = spec.toMs > from ? spec.toMs : from + 3_600_000;
  const px = (t: number) => left + ((t - from) / (to - from)) * (right - left);
  const py = (v: number) => bottom - ((v - yMin) / (yMax - yMin)) * (bottom - top);

  // Axes and grid.
  doc.font("Helvetica").fontSize(7).fillColor(MUTED);
  doc.text(pdfText(spec.yUnit), MARGIN, top - 9, { width: 34, align: "right" });
  for (const v of niceTicks(yMin, yMax)) {
    const y = py(v);
    doc.moveTo(left, y).lineTo(right, y).lineWidth(0.3).strokeColor(LINE).stroke();
    doc
      .fillColor(MUTED)
      .text(v.toLocaleString("en-US"), MARGIN, y - 3.5, { width: 34, align: "right" });
  }
  const spanH = (to - from) / 3_600_000;
  const stepH = [1, 2, 3, 6, 12, 24, 48, 72, 168].find((s) => spanH / s <= 7) ?? 336;
  const fmt = new Intl.DateTimeFormat("en-US", {
    timeZone: ctx.tz,
    month: "short",
    day: "numeric",
    hour: "numeric",
  });
  const firstTick = Math.ceil(from / (stepH * 3_600_000)) * stepH * 3_600_000;
  for (let t = firstTick; t <= to; t += stepH * 3_600_000) {
    const x = px(t);
    doc.moveTo(x, top).lineTo(x, bottom).lineWidth(0.3).strokeColor(LINE).stroke();
    doc
      .fillColor(MUTED)
      .text(pdfText(fmt.format(t)), x - 30, bottom + 4, { width: 60, align: "center" });
  }
  doc
    .rect(left, top, right - left, bottom - top)
    .lineWidth(0.6)
    .strokeColor(MUTED)
    .stroke();

  // Lines, clipped to the plot.
  doc.save();
  doc.rect(left, top, right - left, bottom - top).clip();
  for (const line of spec.lines) {
    let started = false;
    line.xs.forEach((t, i) => {
      const v = line.ys[i];
      if (v === null || v === undefined) {
        started = false;
        return;
      }
      if (!started) doc.moveTo(px(t), py(v));
      else doc.lineTo(px(t), py(v));
      started = true;
    });
    if (line.dash) doc.dash(line.dash[0], { space: line.dash[1] });
    else doc.undash();
    doc.lineWidth(line.width).strokeColor(line.color).stroke();
    doc.undash();
  }
  for (const level of spec.levels) {
    const y = py(level.y);
    doc
      .moveTo(left, y)
      .lineTo(right, y)
      .dash(4, { space: 3 })
      .lineWidth(1)
      .strokeColor(level.color)
      .stroke();
    doc.undash();
  }
  for (const m of spec.marks) {
    const x = px(m.x);
    doc
      .moveTo(x, top)
      .lineTo(x, bottom)
      .dash(2, { space: 2 })
      .lineWidth(1)
      .strokeColor(m.color)
      .stroke();
    doc.undash();
  }
  doc.restore();
  // Threshold labels mid-way along their line: releases, marked at the sides, rarely fall there.
  for (const level of spec.levels) {
    doc.font("Helvetica-Bold").fontSize(7).fillColor(level.color);
    doc.text(pdfText(level.label), (left + right) / 2 - 100, py(level.y) - 9, {
      width: 200,
      align: "center",
    });
  }
  // Release labels above the plot, over their line; one that would touch the last goes higher.
  let lastEnd = -Infinity;
  let lift = 0;
  for (const m of [...spec.marks].sort((a, b) => a.x - b.x)) {
    doc.font("Helvetica-Bold").fontSize(7).fillColor(m.color);
    const label = pdfText(m.label);
    const w = doc.widthOfString(label) + 4;
    const x = Math.min(Math.max(px(m.x) - w / 2, left), right - w);
    lift = x < lastEnd ? lift + 1 : 0;
    doc.text(label, x, top - 9 - lift * 8, { width: w, align: "center", lineBreak: false });
    lastEnd = x + w;
  }

  // Legend: a sample of each line's colour and dash beside its name.
  let lx = left;
  let ly = bottom + 16;
  doc.font("Helvetica").fontSize(7.5);
  for (const line of spec.lines) {
    const w = 26 + doc.widthOfString(pdfText(line.name)) + 12;
    if (lx + w > right) {
      lx = left;
      ly += 11;
    }
    doc.moveTo(lx, ly + 3.5).lineTo(lx + 20, ly + 3.5);
    if (line.dash) doc.dash(line.dash[0], { space: line.dash[1] });
    doc.lineWidth(line.width).strokeColor(line.color).stroke();
    doc.undash();
    doc.fillColor(INK).text(pdfText(line.name), lx + 24, ly, { lineBreak: false });
    lx += w;
  }
  doc.x = MARGIN;
  doc.y = ly + 16;
}

function styleOf(i: number) {
  return SERIES_STYLES[i % SERIES_STYLES.length]!;
}

function temperatureChart(ctx: Ctx): void {
  const { data, units } = ctx;
  const t = (c: number) => (units === "us" ? cToF(c) : c);
  const lastMs = Math.max(
    data.pour.castAt + 3_600_000,
    ...data.sensors.map((s) => s.lastTsMs ?? 0),
  );
  chart(ctx, {
    title: "Temperature at each sensor",
    yUnit: units === "us" ? "°F" : "°C",
    fromMs: data.pour.castAt,
    toMs: lastMs,
    lines: data.sensors.map((s, i) => ({
      name: s.sensor,
      xs: s.temps.tsMs,
      ys: s.temps.tempC.map(t),
      color: styleOf(i).color,
      dash: styleOf(i).dash,
      width: 1,
    })),
    levels: [],
    marks: [],
  });
}

function strengthChart(ctx: Ctx): void {
  const { data, units } = ctx;
  const lastMs = Math.max(
    data.pour.castAt + 3_600_000,
    ...data.sensors.map((s) => s.lastTsMs ?? 0),
  );
  const marks = data.releases.map((r) => ({
    x: r.releasedAt,
    label: `${releaseKindLabels[r.kind]} released${r.overrideReason ? " (override)" : ""}`,
    color: r.overrideReason ? ALARM : ACCENT,
  }));
  if (data.calibration) {
    const s = (mpa: number | null) => (mpa === null ? null : units === "us" ? mpaToPsi(mpa) : mpa);
    const unit = units === "us" ? "psi" : "MPa";
    chart(ctx, {
      title: "Estimated strength over time (ASTM C1074 maturity method)",
      yUnit: unit,
      fromMs: data.pour.castAt,
      toMs: lastMs,
      yMin: 0,
      lines: [
        ...data.sensors.map((x, i) => ({
          name: x.sensor,
          xs: x.maturity.tsMs,
          ys: x.maturity.strengthMpa.map(s),
          color: styleOf(i).color,
          dash: styleOf(i).dash,
          width: 0.8,
        })),
        {
          name: "Governing (weakest)",
          xs: data.governing.tsMs,
          ys: data.governing.strengthMpa.map(s),
          color: INK,
          dash: null,
          width: 2,
        },
      ],
      levels: [
        {
          y: s(data.mix.stripStrengthMpa)!,
          label: `Strip ${strengthText(data.mix.stripStrengthMpa, units)}`,
          color: WARN,
        },
        {
          y: s(data.mix.shipStrengthMpa)!,
          label: `Ship ${strengthText(data.mix.shipStrengthMpa, units)}`,
          color: ALARM,
        },
      ],
      marks,
    });
  } else {
    const f = (ttf: number) => (units === "us" ? ttf * 1.8 : ttf);
    chart(ctx, {
      title: "Temperature-time factor over time (mix not calibrated: no strength estimate)",
      yUnit: units === "us" ? "°F·h" : "°C·h",
      fromMs: data.pour.castAt,
      toMs: lastMs,
      yMin: 0,
      lines: data.sensors.map((x, i) => ({
        name: x.sensor,
        xs: x.maturity.tsMs,
        ys: x.maturity.ttfCH.map(f),
        color: styleOf(i).color,
        dash: styleOf(i).dash,
        width: 1,
      })),
      levels: [],
      marks,
    });
  }
}

function header(ctx: Ctx): void {
  const { doc, data, units, tz } = ctx;
  doc.font("Helvetica-Bold").fontSize(22).fillColor(INK).text("Cure report", MARGIN, MARGIN);
  doc.font("Helvetica").fontSize(11).fillColor(MUTED).text(pdfText(data.plantName), MARGIN, doc.y);
  doc.font("Helvetica-Bold").fontSize(16).fillColor(ACCENT);
  doc.text(pdfText(`Pour ${data.pour.code}`), MARGIN, MARGIN + 4, {
    width: CONTENT_W,
    align: "right",
  });
  doc.font("Helvetica").fontSize(8.5).fillColor(MUTED);
  doc.text(pdfText(`Generated ${formatDateTime(data.asOfMs, tz)} (${tz})`), MARGIN, doc.y + 2, {
    width: CONTENT_W,
    align: "right",
  });
  doc.y = Math.max(doc.y, MARGIN + 44);
  const y0 = doc.y + 4;
  doc
    .moveTo(MARGIN, y0)
    .lineTo(MARGIN + CONTENT_W, y0)
    .lineWidth(1)
    .strokeColor(ACCENT)
    .stroke();

  const half = (CONTENT_W - 16) / 2;
  const { pour, mix, calibration } = data;
  const leftEnd = pairs(ctx, MARGIN, y0 + 8, half, [
    ["Pour", pour.code],
    ["Status", statusLabels[pour.status]],
    ["Bed", pour.bed ?? "—"],
    ["Cast", formatDateTime(pour.castAt, tz)],
    ["Products", productsText(data.products)],
    ["Placing temperature", tempText(pour.dischargeTempC, units)],
  ]);
  const rightEnd = pairs(ctx, MARGIN + half + 16, y0 + 8, half, [
    ["Mix", mix.name],
    [
      "Design / strip / ship",
      `${strengthText(mix.designStrengthMpa, units)} / ${strengthText(mix.stripStrengthMpa, units)} / ${strengthText(mix.shipStrengthMpa, units)}`,
    ],
    ["Datum temperature", displayDatum(mix.datumTempC, units)],
    ["Activation energy", `${(mix.activationEnergyJMol / 1000).toFixed(1)} kJ/mol`],
    [
      "Calibration",
      calibration
        ? `${modelLabels[calibration.model]}, ${calibration.pointCount} points, fitted ${formatDateTime(calibration.createdAtMs, tz, "short")}`
        : "Not calibrated: strength cannot be estimated",
    ],
    ["Fit R²", calibration?.r2 != null ? calibration.r2.toFixed(3) : "—"],
  ]);
  doc.x = MARGIN;
  doc.y = Math.max(leftEnd, rightEnd) + 4;

  // Strip and ship at a glance.
  const calibrated = data.calibration !== null;
  const strip = milestoneText(data.strip, calibrated, tz);
  const ship = milestoneText(data.ship, calibrated, tz);
  const boxY = doc.y;
  const boxW = (CONTENT_W - 12) / 3;
  const boxes: [string, string, string][] = [
    ["Strip", strengthText(data.mix.stripStrengthMpa, units), strip.text],
    ["Ship", strengthText(data.mix.shipStrengthMpa, units), ship.text],
    [
      "Record",
      data.governingSensor ? `Governing sensor ${data.governingSensor}` : "No sensors",
      data.completeRecord ? "Complete: no gap over 2 h" : "Incomplete: has a gap over 2 h",
    ],
  ];
  boxes.forEach(([title, figure, text], i) => {
    const x = MARGIN + i * (boxW + 6);
    doc.rect(x, boxY, boxW, 44).lineWidth(0.6).strokeColor(LINE).stroke();
    doc
      .font("Helvetica-Bold")
      .fontSize(8.5)
      .fillColor(MUTED)
      .text(pdfText(title), x + 6, boxY + 5, { width: boxW - 12 });
    doc
      .font("Helvetica-Bold")
      .fontSize(10)
      .fillColor(INK)
      .text(pdfText(figure), x + 6, boxY + 16, { width: boxW - 12 });
    doc
      .font("Helvetica")
      .fontSize(8)
      .fillColor(INK)
      .text(pdfText(text), x + 6, boxY + 30, { width: boxW - 12 });
  });
  doc.x = MARGIN;
  doc.y = boxY + 52;
}

function sensorsTable(ctx: Ctx): void {
  const { data, units } = ctx;
  heading(ctx, `Sensors at ${formatDateTime(data.asOfMs, ctx.tz, "short")}`);
  if (data.sensors.length === 0) {
    note(ctx, "No sensor was assigned to this pour.");
    return;
  }
  table(
    ctx,
    [
      { header: "Sensor", width: 62 },
      { header: "Kind / place", width: 92 },
      { header: "On the pour", width: 112 },
      { header: "Readings", width: 50, align: "right" },
      { header: "Maturity", width: 62, align: "right" },
      { header: "Equivalent age (20 °C)", width: 62, align: "right" },
      { header: "Strength", width: 60, align: "right" },
      { header: "Record", width: 60 },
    ],
    data.sensors.map((s) => [
      s.sensor + (s.governs ? "" : " (removed)"),
      [s.kind ? sensorKindLabels[s.kind] : "—", s.location ?? s.label ?? ""]
        .filter(Boolean)
        .join(", "),
      `${when(ctx, s.fromMs)} to ${s.toMs === null ? "now" : when(ctx, s.toMs)}`,
      s.readingCount.toLocaleString("en-US"),
      ttfText(s.ttfCH, units),
      hoursText(s.equivalentAgeH),
      strengthText(s.strengthMpa, units),
      s.completeRecord ? "Complete" : "Gap over 2 h",
    ]),
  );
  if (data.sensors.some((s) => !s.completeRecord)) note(ctx, GAP_NOTE, WARN);
}

function breaksTable(ctx: Ctx): void {
  const { data, units } = ctx;
  heading(ctx, "Cylinder breaks");
  if (data.breaks.length === 0) {
    note(ctx, "No cylinder breaks recorded for this pour.");
    return;
  }
  table(
    ctx,
    [
      { header: "Specimen", width: 70 },
      { header: "Broken", width: 90 },
      { header: "Age", width: 44, align: "right" },
      { header: "Break", width: 62, align: "right" },
      { header: "Estimate then", width: 62, align: "right" },
      { header: "Break / estimate", width: 56, align: "right" },
      { header: "Lab, entered by, note", width: 130 },
    ],
    data.breaks.map((b) => {
      const ratio = breakToEstimateRatio(b.strengthMpa, b.estimateMpa);
      return [
        b.specimenId ?? "—",
        when(ctx, b.brokenAt),
        b.ageH === null ? "—" : hoursText(b.ageH),
        strengthText(b.strengthMpa, units),
        strengthText(b.estimateMpa, units),
        ratio === null ? "—" : ratio.toFixed(2),
        [b.lab, b.enteredBy, b.note].filter(Boolean).join(" · ") || "—",
      ];
    }),
  );
}

function releasesTable(ctx: Ctx): void {
  const { data, units } = ctx;
  heading(ctx, "Releases and sign-offs");
  if (data.releases.length === 0) {
    note(ctx, "No strip or ship release has been signed for this pour.");
    return;
  }
  table(
    ctx,
    [
      { header: "Release", width: 46 },
      { header: "Signed by", width: 90 },
      { header: "When", width: 84 },
      { header: "Estimate / threshold", width: 92, align: "right" },
      { header: "Governing sensor, record", width: 84 },
      { header: "Override reason, note", width: 150 },
    ],
    data.releases.map((r) => [
      releaseKindLabels[r.kind],
      r.releasedBy,
      when(ctx, r.releasedAt),
      `${strengthText(r.estimateMpa, units)} / ${strengthText(r.thresholdMpa, units)}`,
      `${r.governingSensorId ?? "—"}, ${r.completeRecord === false ? "gap over 2 h" : r.completeRecord ? "complete" : "—"}`,
      [r.overrideReason ? `OVERRIDE: ${r.overrideReason}` : null, r.note]
        .filter(Boolean)
        .join(" · ") || "—",
    ]),
  );
  // The caution each signer was shown, as it was worded then.
  for (const r of data.releases) {
    if (r.caution && r.caution !== CURE_CAUTION) {
      ctx.doc.moveDown(0.3);
      note(ctx, `Caution shown at the ${r.kind} release: ${r.caution}`);
    }
  }
}

function episodesTable(ctx: Ctx): void {
  const { data } = ctx;
  heading(ctx, "Alerts");
  if (data.episodes.length === 0) {
    note(ctx, "No alerts were raised for this pour or its sensors while they were on it.");
    return;
  }
  table(
    ctx,
    [
      { header: "Alert", width: 100 },
      { header: "Sensor", width: 50 },
      { header: "Opened", width: 76 },
      { header: "Worst", width: 52, align: "right" },
      { header: "Acknowledged (who, when, how), note", width: 150 },
      { header: "Cleared", width: 76 },
      { header: "State", width: 56 },
    ],
    data.episodes.map((e) => [
      `${e.rule} (${severityLook[e.severity].word})`,
      e.sensorId ?? "—",
      when(ctx, e.openedAt),
      e.worstValue === null ? "—" : alertValueText(e.ruleKind, e.worstValue, ctx.units),
      e.acknowledgedAt === null
        ? "—"
        : [
            e.acknowledgedBy,
            when(ctx, e.acknowledgedAt),
            e.ackVia ? ackViaWords[e.ackVia] : null,
            e.ackNote ? `"${e.ackNote}"` : null,
          ]
            .filter(Boolean)
            .join(" · "),
      when(ctx, e.clearedAt),
      episodeStateLabels[e.state],
    ]),
  );
}

function caution(ctx: Ctx): void {
  const { doc } = ctx;
  ensureRoom(ctx, 70);
  doc.moveDown(1);
  const y = doc.y;
  doc.font("Helvetica-Bold").fontSize(9);
  const text = pdfText(CURE_CAUTION);
  const h = doc.heightOfString(text, { width: CONTENT_W - 20 }) + 30;
  doc.rect(MARGIN, y, CONTENT_W, h).lineWidth(1).strokeColor(WARN).stroke();
  doc.fillColor(WARN).text("Caution", MARGIN + 10, y + 8, { width: CONTENT_W - 20 });
  doc
    .font("Helvetica")
    .fontSize(9)
    .fillColor(INK)
    .text(text, MARGIN + 10, doc.y + 2, { width: CONTENT_W - 20 });
  doc.y = y + h + 6;
}

function footers(ctx: Ctx): void {
  const { doc, data, tz } = ctx;
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    // Writing below the bottom margin would start a new page; lift the margin while we do.
    const saved = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    const y = PAGE.height - MARGIN + 6;
    doc
      .moveTo(MARGIN, y - 4)
      .lineTo(MARGIN + CONTENT_W, y - 4)
      .lineWidth(0.4)
      .strokeColor(LINE)
      .stroke();
    doc.font("Helvetica").fontSize(7.5).fillColor(MUTED);
    doc.text(
      pdfText(
        `Plinth · ${data.plantName} · Cure report, pour ${data.pour.code} · Generated ${formatDateTime(data.asOfMs, tz, "short")}`,
      ),
      MARGIN,
      y,
      { width: CONTENT_W - 80, lineBreak: false },
    );
    doc.text(`Page ${i - range.start + 1} of ${range.count}`, MARGIN + CONTENT_W - 80, y, {
      width: 80,
      align: "right",
      lineBreak: false,
    });
    doc.page.margins.bottom = saved;
  }
}

/** The cure report of one pour as PDF bytes, in the reader's units. */
export function renderCureReport(data: PourHistoryData, units: UnitSystem): Promise<Buffer> {
  const doc = new PDFDocument({
    size: "LETTER",
    margins: { top: MARGIN, bottom: MARGIN, left: MARGIN, right: MARGIN },
    bufferPages: true,
    info: {
      Title: pdfText(`Cure report, pour ${data.pour.code}`),
      Author: pdfText(data.plantName),
      Subject: pdfText(`Cure history of pour ${data.pour.code}, mix ${data.mix.name}`),
      Creator: "Plinth",
      CreationDate: new Date(data.asOfMs),
    },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on("data", (c: Buffer) => chunks.push(c));
    doc.on("end", () => resolve(Buffer.concat(chunks)));
    doc.on("error", reject);
  });
  const ctx: Ctx = { doc, data, units, tz: data.timeZone };
  header(ctx);
  temperatureChart(ctx);
  strengthChart(ctx);
  sensorsTable(ctx);
  breaksTable(ctx);
  releasesTable(ctx);
  episodesTable(ctx);
  caution(ctx);
  footers(ctx);
  doc.end();
  return done;
}
