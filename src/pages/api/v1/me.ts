import type { APIRoute } from "astro";
import { mergeNotifyChoices } from "@/lib/notifyChoices";
import { profilePatchBody } from "@/lib/schemas/users";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  findUserByEmail,
  getUser,
  publicUser,
  updateUser,
  type UserPatch,
} from "@/lib/server/db/queries/users";
import { auditActor, endpoint, requireUser } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { conflict, json } from "@/lib/server/http/responses";

export const GET: APIRoute = endpoint(async ({ locals }) => {
  const me = requireUser(locals, "self.manage");
  return json(publicUser(getUser(me.id)!));
});

export const PATCH: APIRoute = endpoint(async (ctx) => {
  const me = requireUser(ctx.locals, "self.manage");
  const parsed = await parseBody(ctx.request, profilePatchBody);
  if (!parsed.ok) return parsed.response;
  const { notify_sms, notify_email, notify_digest, ...rest } = parsed.data;
  const current = getUser(me.id)!;
  if (rest.email && rest.email !== current.email && findUserByEmail(rest.email)) {
    return conflict("Another account already uses that e-mail.");
  }
  const patch: UserPatch = { ...rest };
  if (notify_sms !== undefined || notify_email !== undefined || notify_digest !== undefined) {
    patch.notifyJson = mergeNotifyChoices(current.notifyJson, {
      sms: notify_sms,
      email: notify_email,
      digest: notify_digest,
    });
  }
  const updated = updateUser(me.id, patch)!;
  const changed = Object.keys(parsed.data);
  if (changed.some((k) => k !== "theme")) {
    writeAudit(auditActor(ctx), {
      action: "user.profile_changed",
      entityType: "user",
      entityId: me.id,
      detail: { fields: changed },
    });
  }
  return json(publicUser(updated));
});
