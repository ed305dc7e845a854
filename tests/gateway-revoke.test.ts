import mqtt from "mqtt";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

let plinth: RunningPlinth;
beforeAll(async () => {
  plinth = await startPlinth();
});
afterAll(async () => {
  await plinth?.stop();
});

describe("revoking a gateway", () => {
  it("drops its open MQTT connection at once and refuses the next", async () => {
    const manager = await signIn(plinth.url, demoEmail("manager"));
    const made = await call(plinth.url, manager, "/api/v1/gateways", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ name: "yard-north" }),
    });
    expect(made.status).toBe(201);
    const gw = (await made.json()) as { id: number; name: string; key: string };

    const client = mqtt.connect(`mqtt://127.0.0.1:${plinth.mqttPort}`, {
      username: gw.name,
      password: gw.key,
      reconnectPeriod: 0,
    });
    await new Promise<void>((resolve, reject) => {
      client.once("connect", () => resolve());
      client.once("error", reject);
    });
    await client.publishAsync(
      `plinth/readings/YN-01`,
      JSON.stringify({ ts: Date.now(), temp_c: 4.5 }),
      { qos: 1 },
    );
    const closed = new Promise<void>((resolve) => client.once("close", () => resolve()));

    const revoke = await call(plinth.url, manager, `/api/v1/gateways/${gw.id}/revoke`, {
      method: "POST",
    });
    expect(revoke.status).toBe(200);
    await closed;
    expect(client.connected).toBe(false);
    client.end(true);

    const again = mqtt.connect(`mqtt://127.0.0.1:${plinth.mqttPort}`, {
      username: gw.name,
      password: gw.key,
      reconnectPeriod: 0,
    });
    const refused = await new Promise<number | undefined>((resolve) => {
      again.once("connect", () => resolve(0));
      again.once("error", (err) => resolve((err as { code?: number }).code));
    });
    again.end(true);
    expect(refused).toBe(4); // CONNACK 4: bad user name or password (MQTT 3.1.1 §3.2.2.3)
  });
});
