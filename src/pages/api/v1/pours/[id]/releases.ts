import type { APIRoute } from "astro";
import { RELEASE_CAUTION, type ReleaseKind } from "@/domain/release";
import { mpaToPsi } from "@/domain/units";
import { releaseCreateBody } from "@/lib/schemas/releases";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { listReleases } from "@/lib/server/db/queries/releases";
import { getPourWithMix } from "@/lib/server/db/queries/strength";
import { auditActor, endpoint, requireAction, requireUser } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { json, notFound, problem } from "@/lib/server/http/responses";
import {
  presentRelease,
  recordRelease,
  releaseBasis,
  thresholdMpaOf,
  type ReleaseBasis,
} from "@/lib/server/strength/releases";

const psi = (mpa: number) => `${Math.round(mpaToPsi(mpa)).toLocaleString("en-US")} psi`;

/** The refusal in one sentence, with the figures it rests on. */
function needsOverrideDetail(basis: ReleaseBasis, kind: ReleaseKind, codes: string[]): string {
  const parts: string[] = [];
  const g = basis.governing;
  const threshold = thresholdMpaOf(basis.mix, kind);
  for (const code of codes) {
    if (code === "below-threshold" && g?.estimateMpa != null) {
      parts.push(
        `the governing estimate (${psi(g.estimateMpa)} at ${g.sensorId}) is below the ${kind} strength (${psi(threshold)})`,
      );
    } else if (code === "not-calibrated") {
      parts.push(`mix ${basis.mix.name} is not calibrated, so there is no strength estimate`);
    } else if (code === "no-estimate") {
      parts.push("no sensor on the pour gives a strength estimate");
    } else if (code === "not-stripped") {
      parts.push("the pour has no strip release yet");
    }
  }
  return `Not released: ${parts.join("; ")}. Give an override_reason to release anyway; it is recorded with the release.`;
}

/** The pour's strip and ship releases, oldest first, each with what it rested on. */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  if (id === null || !getPourWithMix(id)) return notFound("pour");
  return json({
    pour_id: id,
    caution: RELEASE_CAUTION,
    releases: listReleases(id).map((r) => presentRelease(r)),
  });
});

/**
 * QC (or a manager) signs off a strip or ship release (contract: POST /api/v1/pours/{id}/releases).
 * Refused (409) below the threshold, without an estimate, or a ship before the strip, unless an
 * override_reason is given; a second release of a kind is always refused. A person must sign.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const user = requireUser(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  if (id === null || !getPourWithMix(id)) return notFound("pour");
  const parsed = await parseBody(ctx.request, releaseCreateBody);
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;
  const basis = releaseBasis(id, Date.now());
  if (!basis) return notFound("pour");

  const outcome = recordRelease(basis, {
    kind: body.kind,
    note: body.note,
    overrideReason: body.override_reason,
    userId: user.id,
  });
  if (!outcome.ok) {
    const d = outcome.decision;
    if (d.outcome === "refused") {
      return problem(409, "release-refused", "Release refused", d.reason.message, {
        errors: [{ field: "kind", error: d.reason.message }],
      });
    }
    return problem(
      409,
      "release-needs-override",
      "Release needs an override reason",
      needsOverrideDetail(
        basis,
        body.kind,
        d.reasons.map((r) => r.code),
      ),
      { errors: d.reasons.map((r) => ({ field: "override_reason", error: r.message })) },
    );
  }

  const { release, decision } = outcome;
  const presented = presentRelease(release);
  writeAudit(
    auditActor(ctx),
    {
      action: `release.${body.kind}`,
      entityType: "release",
      entityId: release.id,
      pourId: id,
      detail: {
        pour_code: basis.pour.code,
        estimate_psi: presented.estimate_psi,
        threshold_psi: presented.threshold_psi,
        governing_sensor: presented.governing_sensor,
        complete_record: presented.complete_record,
        override_reason: presented.override_reason,
        overridden: decision.overridden.map((o) => o.code),
        warnings: decision.warnings.map((w) => w.code),
        status: { from: basis.pour.status, to: decision.nextStatus },
      },
    },
    release.releasedAt,
  );
  return json({ ...presented, pour_status: decision.nextStatus }, 201);
});
