import { createHash } from "node:crypto";
import type { APIRoute } from "astro";
import { ageText, readLabTable, type LabPoint } from "@/domain/calibrationPoints";
import { mpaToPsi } from "@/domain/units";
import { formatDateTime } from "@/lib/format";
import { labUploadBody, MAX_LAB_CSV_CHARS } from "@/lib/schemas/mixes";
import { findLabUpload, getMix, importLabPoints, listPoints } from "@/lib/server/db/queries/mixes";
import { getSetting } from "@/lib/server/db/queries/settings";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { json, notFound, problem } from "@/lib/server/http/responses";
import { presentPoint } from "@/lib/server/present/mixes";
import { parseCsvText } from "@/lib/server/uploads/parse";

const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;
const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());

/** Rows of the file shown back in full. */
const ROWS_SHOWN = 500;

const unreadable = (detail: string, errors?: { row: number; error: string }[]) =>
  problem(422, "lab-file-not-read", "The lab file cannot be read", detail, {
    ...(errors && { errors: errors.slice(0, 200).map((e) => ({ index: e.row, error: e.error })) }),
  });

function pointOut(p: LabPoint) {
  return {
    age_h: p.ageH === null ? null : round(p.ageH, 3),
    ttf_c_h: round(p.ttfCH, 1),
    equivalent_age_h: p.equivalentAgeH === null ? null : round(p.equivalentAgeH, 2),
    strength_psi: round(mpaToPsi(p.strengthMpa), 1),
    strength_mpa: round(p.strengthMpa, 3),
    specimens: p.specimens,
    cylinder_count: p.cylinderCount,
    range_pct: p.rangePct === null ? null : round(p.rangePct, 1),
    broken_at: iso(p.brokenAtMs),
    rows: p.rows,
  };
}

/**
 * QC reads the lab's file of cylinder breaks: columns such as specimen, age (days or hours),
 * strength (psi or MPa), and a maturity or a curing temperature (else the lab's curing
 * temperature for the whole file). Each age's cylinders become one calibration point. With
 * `dry_run` nothing is stored and the answer is the preview; otherwise the readable points are
 * stored (201) and the rows that could not be read are listed, never stored.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const mix = id === null ? undefined : getMix(id);
  if (!mix) return notFound("mix");
  const parsed = await parseBody(ctx.request, labUploadBody, {
    limitBytes: 2 * MAX_LAB_CSV_CHARS + 64 * 1024,
  });
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;

  const timeZone = getSetting("time_zone");
  const csv = parseCsvText(b.csv);
  const read = readLabTable(csv.rows, {
    ageUnit: b.age_unit ?? null,
    strengthUnit: b.strength_unit ?? null,
    tempUnit: b.temp_unit ?? null,
    defaultCuringTempC: b.curing_temp_c ?? null,
    datumC: mix.datumTempC,
    activationEnergyJMol: mix.activationEnergyJMol,
    timeZone,
  });
  if (!read.ok) return unreadable(read.error);
  const t = read.table;

  const sha = createHash("sha256").update(b.csv, "utf8").digest("hex");
  const warnings = [...csv.warnings, ...t.warnings];
  const before = findLabUpload(mix.id, sha);
  if (before) {
    warnings.unshift(
      `This file was imported for ${mix.name} on ${formatDateTime(before.createdAtMs, timeZone)}; importing it again adds its breaks a second time.`,
    );
  }
  const storedAges = new Set(
    listPoints(mix.id)
      .filter((p) => p.ageH !== null)
      .map((p) => p.ageH!.toFixed(2)),
  );
  for (const p of t.points) {
    if (p.ageH !== null && storedAges.has(p.ageH.toFixed(2)))
      warnings.push(`${mix.name} already has a point at ${ageText(p.ageH)}.`);
  }
  const headerName = (i: number | null) => (i === null ? null : (t.headers[i] ?? null));
  const answer = {
    file_name: b.file_name,
    dry_run: b.dry_run,
    header_row: t.headerRow,
    columns: Object.fromEntries(
      Object.entries(t.columns).map(([k, i]) => [k, headerName(i)]),
    ) as Record<keyof typeof t.columns, string | null>,
    units: t.units,
    datum_temp_c: mix.datumTempC,
    rows_in: t.rows.length + t.errors.length,
    rows: t.rows.slice(0, ROWS_SHOWN).map((r) => ({
      row: r.row,
      specimen: r.specimen,
      age_h: r.ageH === null ? null : round(r.ageH, 3),
      strength_psi: round(mpaToPsi(r.strengthMpa), 1),
      ttf_c_h: round(r.ttfCH, 1),
      curing_temp_c: r.curingTempC === null ? null : round(r.curingTempC, 2),
      broken_at: iso(r.brokenAtMs),
    })),
    errors: t.errors,
    points: t.points.map(pointOut),
    warnings,
  };
  if (b.dry_run) return json({ ...answer, imported: 0, upload_id: null, point_ids: [] });
  if (t.points.length === 0)
    return unreadable("No row of the file could be read, so nothing was stored.", t.errors);

  const imported = importLabPoints(
    {
      mixId: mix.id,
      mixName: mix.name,
      fileName: b.file_name,
      fileSha256: sha,
      mapping: { columns: answer.columns, units: t.units, curing_temp_c: b.curing_temp_c ?? null },
      rowsIn: answer.rows_in,
      rowsRejected: t.errors.length,
      errors: t.errors,
      uploadedBy: caller.kind === "user" ? caller.user.id : null,
      points: t.points.map((p) => ({
        ageH: p.ageH,
        ttfCH: p.ttfCH,
        equivalentAgeH: p.equivalentAgeH,
        strengthMpa: p.strengthMpa,
        specimens:
          p.specimens ??
          `${p.cylinderCount} cylinder${p.cylinderCount === 1 ? "" : "s"}, ${b.file_name}`,
        brokenAt: p.brokenAtMs,
      })),
    },
    auditActor(ctx),
  );
  return json(
    {
      ...answer,
      imported: imported.points.length,
      upload_id: imported.uploadId,
      point_ids: imported.points.map((p) => p.id),
      stored: imported.points.map(presentPoint),
    },
    201,
  );
});
