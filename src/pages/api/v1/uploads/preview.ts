import type { APIRoute } from "astro";
import { createHash } from "node:crypto";
import { countStoredReadings, findLoggerUploadBySha } from "@/lib/server/db/queries/uploads";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { badRequest, json, payloadTooLarge } from "@/lib/server/http/responses";
import {
  csvBytes,
  loggerPreviewBody,
  MAX_CSV_BYTES,
  MAX_UPLOAD_BODY_BYTES,
  readLoggerUpload,
} from "@/lib/server/uploads/parse";
import { presentPreview } from "@/lib/server/uploads/present";

/**
 * Reads a logger file as an import would, and stores nothing: how it was read (delimiter,
 * header, columns, time format), the first rows, each rejected row's reason, how many of the
 * good readings Plinth already holds, and whether this very file was imported before.
 * Without `columns`, the mapping proposed from the header is used and returned.
 */
export const POST: APIRoute = endpoint(async ({ request, locals }) => {
  requireAction(locals, "floor.operate");
  const parsed = await parseBody(request, loggerPreviewBody, { limitBytes: MAX_UPLOAD_BODY_BYTES });
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;
  if (csvBytes(body.csv) > MAX_CSV_BYTES)
    return payloadTooLarge("A logger file may be at most 5 MiB.");

  const { table, result } = readLoggerUpload(body, Date.now());
  if (!result.ok) return badRequest("The column mapping does not fit the file.", result.errors);
  const file = result.file;
  const sha = createHash("sha256").update(body.csv).digest("hex");
  return json(
    presentPreview(
      { fileName: body.file_name, sensor: body.sensor ?? null, timeZone: body.time_zone },
      file,
      table.delimiter,
      table.warnings,
      {
        alreadyStored: body.sensor
          ? countStoredReadings(
              body.sensor,
              file.readings.map((r) => r.tsMs),
            )
          : null,
        previousUpload: findLoggerUploadBySha(sha),
      },
    ),
  );
});
