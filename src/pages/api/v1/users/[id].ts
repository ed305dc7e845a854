import type { APIRoute } from "astro";
import { userPatchBody } from "@/lib/schemas/users";
import { endSessionsOfUser } from "@/lib/server/auth";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  countActiveManagers,
  getUser,
  publicUser,
  updateUser,
} from "@/lib/server/db/queries/users";
import { auditActor, endpoint, requireUser } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { conflict, json, notFound } from "@/lib/server/http/responses";

/** A manager changes a person's role, name or phone, or deactivates them. */
export const PATCH: APIRoute = endpoint(async (ctx) => {
  const me = requireUser(ctx.locals, "users.manage");
  const id = parseId(ctx.params.id);
  const target = id === null ? undefined : getUser(id);
  if (!target) return notFound("user");
  const parsed = await parseBody(ctx.request, userPatchBody);
  if (!parsed.ok) return parsed.response;
  const patch = parsed.data;

  // The plant must keep at least one active manager.
  const losesManager =
    target.role === "manager" &&
    target.active &&
    (patch.active === false || (patch.role && patch.role !== "manager"));
  if (losesManager && countActiveManagers() <= 1) {
    return conflict("This is the last active manager. Make someone else a manager first.");
  }
  if (target.id === me.id && patch.active === false)
    return conflict("You cannot deactivate yourself.");

  const updated = updateUser(target.id, patch)!;
  const actor = auditActor(ctx);
  if (patch.role && patch.role !== target.role) {
    writeAudit(actor, {
      action: "user.role_changed",
      entityType: "user",
      entityId: target.id,
      detail: { email: target.email, from: target.role, to: patch.role },
    });
  }
  if (patch.active !== undefined && patch.active !== target.active) {
    writeAudit(actor, {
      action: patch.active ? "user.reactivated" : "user.deactivated",
      entityType: "user",
      entityId: target.id,
      detail: { email: target.email },
    });
    if (!patch.active) await endSessionsOfUser(target.id);
  }
  if (patch.name !== undefined || patch.phone !== undefined) {
    writeAudit(actor, {
      action: "user.details_changed",
      entityType: "user",
      entityId: target.id,
      detail: { fields: Object.keys(patch).filter((k) => k === "name" || k === "phone") },
    });
  }
  return json(publicUser(updated));
});
