import {
  alertRuleCreateBody,
  alertRuleListOut,
  alertRuleOut,
  alertRulePatchBody,
} from "@/lib/schemas/alertRules";
import type { Doc } from "./doc";

export const alertRulesDocs: Record<string, Doc> = {
  "GET /api/v1/alert-rules": {
    summary:
      "Every alert rule by name: its kind, threshold in SI with threshold_unit, hold and clearing margin, severity, who is told, scope, escalation, source and open episodes.",
    response: alertRuleListOut,
  },
  "POST /api/v1/alert-rules": {
    summary:
      "Add an alert rule; checked for its kind (a range needs low < high; a pour milestone takes no threshold or sensor scope). A scope naming an unknown area, sensor or pour is refused (422); a name another rule has (letter case aside) is refused (409).",
    body: alertRuleCreateBody,
    response: alertRuleOut,
  },
  "GET /api/v1/alert-rules/{id}": { summary: "One alert rule.", response: alertRuleOut },
  "PATCH /api/v1/alert-rules/{id}": {
    summary:
      "Change any subset of a rule (merged as JSON merge patch; the result is checked whole), or disable it with enabled: false. A rule with episodes keeps its kind (409); a new name must not be another rule's (409).",
    body: alertRulePatchBody,
    response: alertRuleOut,
  },
  "DELETE /api/v1/alert-rules/{id}": {
    summary:
      "Delete a rule that never raised an episode (204). A rule with episodes is refused (409): disable it instead; its episodes are the audit record.",
  },
};
