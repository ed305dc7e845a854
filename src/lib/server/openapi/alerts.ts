import { z } from "zod";
import { alertAckBody, alertOut } from "@/lib/schemas/alerts";
import type { Doc } from "./doc";

export const alertsDocs: Record<string, Doc> = {
  "GET /api/v1/alerts": {
    summary:
      "Alert episodes, newest first. `state=open` lists what still needs someone; `active` is open or acknowledged.",
    query: {
      state: "open, acknowledged, cleared, or active (open or acknowledged)",
      sensor: "a sensor's id",
      pour_id: "a pour's id",
      rule_id: "a rule's id",
      severity: "info, warning or critical",
      since: "opened at or after (ISO 8601 or epoch ms)",
      before_id: "paging: episodes with a smaller id",
      limit: "at most this many (1-1000, default 200)",
    },
    response: z.array(alertOut),
  },
  "GET /api/v1/alerts/{id}": {
    summary:
      "One alert episode with every notice sent about it and its audit entries (addresses shown to managers only).",
  },
  "POST /api/v1/alerts/{id}/ack": {
    summary:
      "Acknowledge an episode with a note of what was done: it stops escalating. 409 when already acknowledged.",
    body: alertAckBody,
    response: alertOut,
  },
};
