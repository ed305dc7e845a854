import {
  onCallAnswer,
  onCallCreateBody,
  onCallPatchBody,
  onCallShiftAnswer,
} from "@/lib/schemas/onCall";
import type { Doc } from "./doc";

export const onCallDocs: Record<string, Doc> = {
  "GET /api/v1/on-call": {
    summary:
      "The on-call rota: who is on call now (told first, then one person a level on each escalation; past the list, everyone on call and the managers) and until when, every shift, and warnings (people without a phone or with texts off, stretches nobody covers). Phone numbers are never shown, only whether one is set.",
    query: {
      at: "another moment to ask about, ISO 8601 with an offset or epoch ms (default: now)",
    },
    response: onCallAnswer,
  },
  "POST /api/v1/on-call": {
    summary:
      "Add a shift: a person (active, not a viewer), the days it starts on, start and end on the plant's wall clock, and the escalation order. Answers the shift with warnings about its person.",
    body: onCallCreateBody,
    response: onCallShiftAnswer,
  },
  "PATCH /api/v1/on-call/{id}": {
    summary: "Change any part of a shift. Answers the shift with warnings about its person.",
    body: onCallPatchBody,
    response: onCallShiftAnswer,
  },
  "DELETE /api/v1/on-call/{id}": { summary: "Remove a shift from the rota (204)." },
};
