import { z } from "zod";
import { releaseKinds } from "@/domain/release";

/** Free text that may be left out: trimmed, and blank reads as none. */
const optionalText = (max: number, what: string) =>
  z
    .string({ error: `Write the ${what} as text` })
    .trim()
    .max(max, { error: `Keep the ${what} under ${max} characters` })
    .nullish()
    .transform((s) => (s ? s : null));

/**
 * QC signs off a strip or ship release (contract: POST /api/v1/pours/{id}/releases).
 * `override_reason` is needed only when the release would otherwise be refused: below the
 * threshold, no estimate (mix not calibrated), or a ship release before the strip release.
 */
export const releaseCreateBody = z
  .object({
    kind: z.enum(releaseKinds, { error: 'Choose "strip" or "ship"' }),
    note: optionalText(2000, "note"),
    override_reason: optionalText(2000, "override reason"),
  })
  .strict();

export type ReleaseCreateBody = z.infer<typeof releaseCreateBody>;
