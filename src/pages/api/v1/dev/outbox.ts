import type { APIRoute } from "astro";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { json, problem } from "@/lib/server/http/responses";
import { devOutbox } from "@/lib/server/notify/service";

/**
 * Everything the local e-mail and SMS fakes received, newest first, as
 * [{"channel", "to", "body", "sent_at"}]. Only while the fakes run (demo, NOTIFY_FAKES=1).
 */
export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.admin");
  const items = devOutbox();
  if (items === null)
    return problem(
      404,
      "not-found",
      "Not found",
      "The local e-mail and SMS fakes are not running; notices go to the services configured.",
    );
  return json(items, 200, { "cache-control": "no-store" });
});
