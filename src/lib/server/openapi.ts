/**
 * The OpenAPI 3.1 description of every /api/v1 route, built from the access table (which
 * routes exist, which methods, who may call them) and the zod schemas the routes use
 * (turned into JSON Schema by zod itself). A route added to the table without a line here
 * still appears, with its access; the test checks that every route is described.
 */
import { z } from "zod";
import { permissions, routeAccess, type Requirement } from "@/lib/access";
import { calibrationCreateBody } from "@/lib/schemas/calibrations";
import { gatewayCreateBody, tokenCreateBody } from "@/lib/schemas/keys";
import {
  areaCreateBody,
  readingBatchAnswer,
  readingBatchBody,
  sensorPatchBody,
} from "@/lib/schemas/plant";
import {
  passwordChangeBody,
  profilePatchBody,
  userCreateBody,
  userPatchBody,
} from "@/lib/schemas/users";
import {
  calibrationFitBody,
  labUploadBody,
  mixCreateBody,
  mixPatchBody,
  pointCreateBody,
} from "@/lib/schemas/mixes";
import {
  breakCreateBody,
  pourCreateBody,
  pourPatchBody,
  pourSensorsBody,
} from "@/lib/schemas/pours";
import { releaseCreateBody } from "@/lib/schemas/releases";
import { loggerPreviewBody, loggerUploadBody } from "./uploads/parse";

import { alertRulesDocs } from "./openapi/alertRules";
import { alertsDocs } from "./openapi/alerts";
import type { Doc } from "./openapi/doc";
import { onCallDocs } from "./openapi/onCall";

const sensorOut = z.object({
  id: z.string(),
  label: z.string().nullable(),
  kind: z.enum(["bag", "embedded", "bin", "ambient"]).nullable(),
  area: z.string().nullable(),
  last_seen_at: z.string().nullable(),
  last_temp_c: z.number().nullable(),
  last_rh: z.number().nullable(),
  status: z.enum(["new", "reporting", "silent", "retired"]),
});

const docs: Record<string, Doc> = {
  "POST /api/v1/readings": {
    summary: "Send readings (gateway key only). Answered after the commit.",
    body: readingBatchBody,
    response: readingBatchAnswer,
  },
  "GET /api/v1/live": {
    summary:
      "Server-sent events: `readings` as they are committed, `sensor` changes, and `alert` episodes as they open, worsen, are acknowledged and clear.",
  },
  "GET /api/v1/me": { summary: "Your own account." },
  "PATCH /api/v1/me": {
    summary: "Change your name, e-mail, phone, units, theme or alert channels.",
    body: profilePatchBody,
  },
  "POST /api/v1/me/password": {
    summary: "Change your password; other sessions end.",
    body: passwordChangeBody,
  },
  "GET /api/v1/users": { summary: "Everyone who may sign in." },
  "POST /api/v1/users": {
    summary: "Add a person; without a password a one-time one is answered once.",
    body: userCreateBody,
  },
  "PATCH /api/v1/users/{id}": {
    summary: "Change a person's role, name or phone, or deactivate them.",
    body: userPatchBody,
  },
  "POST /api/v1/users/{id}/password-reset": {
    summary: "Set a one-time password (answered once) and end the person's sessions.",
  },
  "GET /api/v1/audit": {
    summary: "The audit log, newest first.",
    query: {
      action: "action prefix, e.g. auth.",
      q: "search text",
      before_id: "page before this id",
      limit: "1 to 500",
    },
  },
  "GET /api/v1/areas": { summary: "Cure rooms, the yard, bin areas." },
  "POST /api/v1/areas": { summary: "Add an area.", body: areaCreateBody },
  "GET /api/v1/sensors": {
    summary: "Every sensor with its last reading and status.",
    response: z.array(sensorOut),
  },
  "GET /api/v1/sensors/{id}": { summary: "One sensor.", response: sensorOut },
  "PATCH /api/v1/sensors/{id}": {
    summary: "Name, place or retire a sensor (any subset).",
    body: sensorPatchBody,
    response: sensorOut,
  },
  "GET /api/v1/sensors/{id}/readings": {
    summary:
      "Readings in a window, oldest first, thinned to max_points keeping every peak and dip.",
    query: {
      from: "ISO 8601 or epoch ms (default: 24 h before to)",
      to: "ISO 8601 or epoch ms (default: now)",
      max_points: "10 to 20000 (default 1000)",
    },
    response: z.object({
      sensor: z.string(),
      readings: z.array(
        z.object({ ts: z.string(), temp_c: z.number(), rh: z.number().nullable() }),
      ),
    }),
  },
  "GET /api/v1/sensors/{id}/calibrations": {
    summary: "A sensor's reference-thermometer checks, newest first.",
  },
  "POST /api/v1/sensors/{id}/calibrations": {
    summary: "Record a check; its offsets apply to readings from then on.",
    body: calibrationCreateBody,
  },
  "GET /api/v1/gateways": { summary: "Gateways (keys never shown)." },
  "POST /api/v1/gateways": {
    summary: "Add a gateway; the key is answered only this once.",
    body: gatewayCreateBody,
    response: z.object({ id: z.number(), name: z.string(), key: z.string() }),
  },
  "POST /api/v1/gateways/{id}/revoke": { summary: "Revoke a gateway's key." },
  "GET /api/v1/tokens": { summary: "API tokens for scripts (keys never shown)." },
  "POST /api/v1/tokens": {
    summary: "Make an API token; the key is answered only this once.",
    body: tokenCreateBody,
  },
  "POST /api/v1/tokens/{id}/revoke": { summary: "Revoke an API token." },
  "GET /api/v1/uploads": { summary: "Logger files imported, newest first." },
  "POST /api/v1/uploads": {
    summary: "Import a logger CSV file; bad rows are listed, good ones kept, duplicates skipped.",
    body: loggerUploadBody,
  },
  "POST /api/v1/uploads/preview": {
    summary: "Read a logger CSV file and show its rows and errors, storing nothing.",
    body: loggerPreviewBody,
  },
  "GET /api/v1/openapi.json": { summary: "This description." },
  "GET /api/v1/mixes": { summary: "Mixes with their strengths and calibration state." },
  "POST /api/v1/mixes": {
    summary:
      "Add a mix: name, design, strip and ship strengths (psi), datum temperature, activation energy.",
    body: mixCreateBody,
  },
  "GET /api/v1/mixes/{id}": { summary: "One mix." },
  "PATCH /api/v1/mixes/{id}": {
    summary: "Change a mix; a new datum or activation energy rebuilds its pours' maturity.",
    body: mixPatchBody,
  },
  "GET /api/v1/mixes/{id}/calibration": {
    summary: "The mix's strength-maturity curve in force, and earlier fits.",
  },
  "POST /api/v1/mixes/{id}/calibration": {
    summary:
      "Fit a strength-maturity curve (log, hyperbolic or exponential) to points; it becomes the mix's curve.",
    body: calibrationFitBody,
  },
  "GET /api/v1/mixes/{id}/points": {
    summary: "The mix's calibration points (cylinder breaks at known maturity).",
  },
  "POST /api/v1/mixes/{id}/points": {
    summary:
      "Add a calibration point from a break, with its maturity, curing temperature or temperature record.",
    body: pointCreateBody,
  },
  "DELETE /api/v1/mixes/{id}/points/{pointId}": { summary: "Remove a calibration point." },
  "POST /api/v1/mixes/{id}/points/upload": {
    summary: "Import calibration points from the lab's CSV (dry_run to preview).",
    body: labUploadBody,
  },
  "GET /api/v1/pours": { summary: "Pours, newest first." },
  "POST /api/v1/pours": {
    summary: "Record a pour: code, mix, cast time and the sensors watching it.",
    body: pourCreateBody,
  },
  "GET /api/v1/pours/{id}": {
    summary: "One pour: mix, pieces, sensors, fresh-concrete tests, status.",
  },
  "PATCH /api/v1/pours/{id}": {
    summary: "Change a pour's fresh-concrete tests, notes, pieces or status.",
    body: pourPatchBody,
  },
  "GET /api/v1/pours/{id}/sensors": {
    summary: "The pour's sensor assignments with their time windows.",
  },
  "POST /api/v1/pours/{id}/sensors": {
    summary: "Add or end sensor assignments; the pour's maturity is rebuilt.",
    body: pourSensorsBody,
  },
  "GET /api/v1/pours/{id}/strength": {
    summary:
      "In-place strength by the maturity method: each sensor, the governing one, strip and ship progress.",
  },
  "GET /api/v1/pours/{id}/breaks": {
    summary: "Cylinder breaks of the pour, each against the estimate at its time.",
  },
  "POST /api/v1/pours/{id}/breaks": {
    summary: "Record a cylinder break; below 90 % of the estimate warns to recalibrate.",
    body: breakCreateBody,
  },
  "GET /api/v1/pours/{id}/releases": { summary: "The pour's strip and ship sign-offs." },
  "POST /api/v1/pours/{id}/releases": {
    summary:
      "Sign off strip or ship; refused (409) below the threshold unless an override reason is given.",
    body: releaseCreateBody,
  },
  "GET /api/v1/pours/{id}/history.csv": { summary: "The pour's whole cure record as CSV." },
  "GET /api/v1/pours/{id}/report.pdf": { summary: "The pour's printable cure report." },
  "GET /api/v1/ready": {
    summary: "What is ready to strip and ship now, and what comes next, soonest first.",
  },
  "GET /api/v1/dev/outbox": {
    summary: "Every e-mail and text the local fakes received, newest first (only while they run).",
  },
  "POST /api/v1/sms/inbound": {
    summary: "Replies to alert texts (the SMS provider's webhook; its signature is checked).",
  },
  "GET /api/v1/bins": {
    summary:
      "Aggregate bins with their last temperatures, and for a mix the next batch's temperature by the ACI 305R/306R heat balance, with the water temperature or ice that brings it into the placing range.",
    query: {
      mix_id: "a mix's id",
      water_temp_c: "added mixing water, °C (default 15)",
      cement_temp_c: "cement and SCM, °C (default 15)",
      fine_temp_c: "fine aggregate measured by hand, °C",
      coarse_temp_c: "coarse aggregate measured by hand, °C",
      bins: "comma-separated bin ids to average (default: every reporting bin)",
    },
  },
  ...alertsDocs,
  ...alertRulesDocs,
  ...onCallDocs,
};

const problem = {
  description: "An error as RFC 9457 problem details",
  content: { "application/problem+json": { schema: { $ref: "#/components/schemas/Problem" } } },
};

function jsonSchema(schema: z.ZodType): Record<string, unknown> {
  return z.toJSONSchema(schema, {
    io: "input",
    unrepresentable: "any",
    target: "draft-2020-12",
  }) as Record<string, unknown>;
}

function who(need: Requirement): string {
  if (need === "public") return "No sign-in needed.";
  if (need === "session") return "Any signed-in person.";
  if (need === "gateway") return "A gateway's key.";
  return `Roles: ${permissions[need].join(", ")} (action ${need}).`;
}

/** The document, built once per process. */
export function openApiDocument(): Record<string, unknown> {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const r of routeAccess) {
    if (!r.route.startsWith("/api/v1/")) continue;
    const path = r.route.replace(/\[([^\]]+)\]/g, "{$1}");
    const params = [...path.matchAll(/\{([^}]+)\}/g)].map((m) => ({
      name: m[1],
      in: "path",
      required: true,
      schema: { type: "string" },
    }));
    for (const [method, need] of Object.entries(r.methods)) {
      const doc = docs[`${method} ${path}`];
      const op: Record<string, unknown> = {
        summary: doc?.summary ?? `${method} ${path}`,
        description: who(need!),
        security:
          need === "public"
            ? []
            : need === "gateway"
              ? [{ gatewayKey: [] }]
              : [{ session: [] }, { apiToken: [] }],
        parameters: [
          ...params,
          ...Object.entries(doc?.query ?? {}).map(([name, description]) => ({
            name,
            in: "query",
            required: false,
            description,
            schema: { type: "string" },
          })),
        ],
        responses: {
          "200": {
            description: "Done",
            ...(doc?.response
              ? { content: { "application/json": { schema: jsonSchema(doc.response) } } }
              : {}),
          },
          "400": problem,
          ...(need === "public" ? {} : { "401": problem, "403": problem }),
        },
      };
      if (doc?.body)
        op.requestBody = {
          required: true,
          content: { "application/json": { schema: jsonSchema(doc.body) } },
        };
      (paths[path] ??= {})[method.toLowerCase()] = op;
    }
  }
  return {
    openapi: "3.1.0",
    info: {
      title: "Plinth API",
      version: "1",
      description:
        "Readings in from gateways, and the plant's sensors, pours, mixes and records out. JSON field names are snake_case and carry their units (temp_c, strength_psi). Errors are RFC 9457 problem details.",
    },
    paths,
    components: {
      securitySchemes: {
        session: { type: "apiKey", in: "cookie", name: "plinth_session" },
        apiToken: { type: "http", scheme: "bearer", description: "An API token made by a manager" },
        gatewayKey: {
          type: "http",
          scheme: "bearer",
          description: "A gateway's key (readings only)",
        },
      },
      schemas: {
        Problem: {
          type: "object",
          required: ["type", "title", "status"],
          properties: {
            type: { type: "string" },
            title: { type: "string" },
            status: { type: "integer" },
            detail: { type: "string" },
            errors: {
              type: "array",
              items: {
                type: "object",
                properties: {
                  field: { type: "string" },
                  index: { type: "integer" },
                  error: { type: "string" },
                },
              },
            },
          },
        },
      },
    },
  };
}
