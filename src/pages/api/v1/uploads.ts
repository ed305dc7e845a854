import type { APIRoute } from "astro";
import { createHash } from "node:crypto";
import { z } from "zod";
import { importLoggerUpload, listLoggerUploads } from "@/lib/server/db/queries/uploads";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { fieldErrors, parseBody } from "@/lib/server/http/parse";
import { badRequest, json, payloadTooLarge } from "@/lib/server/http/responses";
import { bus } from "@/lib/server/live/bus";
import {
  csvBytes,
  loggerUploadBody,
  MAX_CSV_BYTES,
  MAX_UPLOAD_BODY_BYTES,
  readLoggerUpload,
} from "@/lib/server/uploads/parse";
import { presentUpload, rowErrors } from "@/lib/server/uploads/present";

const uploadsQuery = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(100),
  before_id: z.coerce.number().int().min(1).optional(),
});

/** The logger-upload history, newest first (`limit`, and `before_id` for the next page). */
export const GET: APIRoute = endpoint(async ({ locals, url }) => {
  requireAction(locals, "plant.read");
  const q = uploadsQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!q.success) return badRequest("Bad query.", fieldErrors(q.error));
  const list = listLoggerUploads({
    limit: q.data.limit,
    ...(q.data.before_id && { beforeId: q.data.before_id }),
  });
  return json({ uploads: list.map(presentUpload) });
});

/**
 * Imports a logger file: every row is read and checked as the preview shows; the good ones
 * are stored (a reading already held for the sensor and time is counted as a duplicate, not
 * stored twice), and the upload is recorded with its counts and its rejected rows, all in
 * one transaction. Answers 201 after the commit.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "floor.operate");
  const parsed = await parseBody(ctx.request, loggerUploadBody, {
    limitBytes: MAX_UPLOAD_BODY_BYTES,
  });
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;
  if (csvBytes(body.csv) > MAX_CSV_BYTES)
    return payloadTooLarge("A logger file may be at most 5 MiB.");

  const nowMs = Date.now();
  const { table, result } = readLoggerUpload(body, nowMs);
  if (!result.ok) return badRequest("The column mapping does not fit the file.", result.errors);
  const file = result.file;
  if (file.rows.length === 0) {
    return badRequest("The file has no rows of readings below its header.", [
      { field: "csv", error: "no data rows" },
    ]);
  }
  const { errors, truncated } = rowErrors(file.rows);
  const rejected = file.rows.length - file.readings.length;
  const { upload, store } = importLoggerUpload(
    file.readings,
    {
      fileName: body.file_name,
      fileSha256: createHash("sha256").update(body.csv).digest("hex"),
      sensorId: body.sensor,
      timeZone: body.time_zone,
      mapping: {
        columns: file.columns,
        headers: file.columns && {
          time: file.headers[file.columns.time],
          date: file.columns.date === null ? null : file.headers[file.columns.date],
          temp: file.headers[file.columns.temp],
          rh: file.columns.rh === null ? null : file.headers[file.columns.rh],
        },
        temp_unit: file.tempUnit,
        time_format: file.timeFormat,
        header_row: file.headerIndex === null ? 0 : file.headerIndex + 1,
        delimiter: table.delimiter,
      },
      rowsIn: file.rows.length,
      rowsRejected: rejected,
      errors,
      uploadedBy: caller.kind === "user" ? caller.user.id : null,
      uploadedVia: caller.kind === "token" ? `API token ${caller.name}` : null,
    },
    auditActor(ctx),
    nowMs,
  );

  // Tell the live floor after the commit. A logger file is mostly history: only a reading
  // that became its sensor's newest changes what the floor shows, so only that one is sent.
  const committedAtMs = Date.now();
  const newest = store.stored.filter((r) => r.latest);
  if (newest.length > 0) {
    bus().emit(
      "readings",
      newest.map((r) => ({
        sensorId: r.sensorId,
        tsMs: r.tsMs,
        tempC: r.tempC,
        rhPct: r.rhPct,
        latest: true,
        committedAtMs,
      })),
    );
  }
  for (const id of store.newSensors) bus().emit("sensor", { sensorId: id, change: "registered" });

  return json(
    {
      ...presentUpload(upload),
      sensor: body.sensor,
      new_sensor: store.newSensors.includes(body.sensor),
      errors,
      errors_truncated: truncated,
    },
    201,
  );
});
