import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { routeAccess } from "@/lib/access";
import { startPlinth, type RunningPlinth } from "./helpers/server";

let plinth: RunningPlinth;
beforeAll(async () => {
  plinth = await startPlinth({ demo: false });
});
afterAll(async () => {
  await plinth?.stop();
});

interface Operation {
  summary: string;
  description: string;
  requestBody?: {
    content: { "application/json": { schema: { properties?: Record<string, unknown> } } };
  };
}

describe("GET /api/v1/openapi.json", () => {
  it("describes every /api/v1 route and method of the access table, each with a summary", async () => {
    const res = await fetch(`${plinth.url}/api/v1/openapi.json`);
    expect(res.status).toBe(200);
    const doc = (await res.json()) as {
      openapi: string;
      paths: Record<string, Record<string, Operation>>;
    };
    expect(doc.openapi).toBe("3.1.0");
    for (const r of routeAccess.filter((x) => x.route.startsWith("/api/v1/"))) {
      const path = r.route.replace(/\[([^\]]+)\]/g, "{$1}");
      for (const method of Object.keys(r.methods)) {
        const op = doc.paths[path]?.[method.toLowerCase()];
        expect(op, `${method} ${path}`).toEqual(
          expect.objectContaining({ summary: expect.any(String) }),
        );
        expect(op!.summary, `${method} ${path} has no summary of its own`).not.toBe(
          `${method} ${path}`,
        );
      }
    }
  });

  it("gives the readings contract's body: sensor, ts, temp_c or temp_f, rh", async () => {
    const doc = (await (await fetch(`${plinth.url}/api/v1/openapi.json`)).json()) as {
      paths: Record<string, Record<string, Operation>>;
    };
    const body = doc.paths["/api/v1/readings"]!.post!.requestBody!.content["application/json"]
      .schema as {
      properties: {
        readings: { items: { properties: Record<string, unknown> }; maxItems: number };
      };
    };
    expect(Object.keys(body.properties.readings.items.properties)).toEqual(
      expect.arrayContaining(["sensor", "ts", "temp_c", "temp_f", "rh"]),
    );
    expect(body.properties.readings.maxItems).toBe(5_000);
  });
});
