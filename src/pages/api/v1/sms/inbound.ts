import type { APIRoute } from "astro";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { env } from "@/lib/server/env";
import { auditActor, endpoint } from "@/lib/server/http/guard";
import { readBodyLimited } from "@/lib/server/http/parse";
import { forbidden, payloadTooLarge, unsupportedMediaType } from "@/lib/server/http/responses";
import { log } from "@/lib/server/log";
import { handleInboundSms, signedUrl, twiml } from "@/lib/server/notify/inbound";
import { smsAuthToken } from "@/lib/server/notify/service";

/**
 * A text coming back, posted by the SMS provider (form-encoded, signed in X-Twilio-Signature).
 * Public: the signature, checked against the public URL, is the proof of origin; a bad one
 * is refused 403. Answers TwiML, which the provider texts back to the sender.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const type = (ctx.request.headers.get("content-type") ?? "").toLowerCase();
  if (!type.startsWith("application/x-www-form-urlencoded"))
    return unsupportedMediaType("Send application/x-www-form-urlencoded, as the provider does.");
  const bytes = await readBodyLimited(ctx.request, 64 * 1024);
  if (bytes === null) return payloadTooLarge("The body is over 64 KiB.");
  const params: Record<string, string> = {};
  for (const [k, v] of new URLSearchParams(new TextDecoder().decode(bytes))) params[k] = v;

  const outcome = handleInboundSms({
    authToken: smsAuthToken(),
    signature: ctx.request.headers.get("x-twilio-signature"),
    url: signedUrl(ctx.url, env().PUBLIC_URL),
    params,
    onError: (err) => log.error("reply handler failed", { requestId: ctx.locals.requestId, err }),
  });
  if (outcome.kind === "forbidden") {
    log.warn("text reply refused", { requestId: ctx.locals.requestId, why: outcome.detail });
    return forbidden(outcome.detail);
  }
  if (outcome.user) {
    const actor = auditActor(ctx);
    writeAudit(
      { userId: outcome.user.id, label: outcome.user.email, ip: actor.ip },
      {
        action: "notice.text_reply",
        entityType: "user",
        entityId: outcome.user.id,
        detail: { from: params.From ?? "", ack: outcome.ack, handled: outcome.handled },
      },
    );
  } else {
    log.warn("text reply from a number no active person has", {
      requestId: ctx.locals.requestId,
    });
  }
  return new Response(twiml(outcome.message), {
    status: 200,
    headers: { "content-type": "text/xml; charset=utf-8" },
  });
});
