import { asc, eq } from "drizzle-orm";
import { getDb } from "../client";
import { gateways } from "../schema";

export type GatewayRow = typeof gateways.$inferSelect;

export function findGatewayByName(name: string): GatewayRow | undefined {
  return getDb().select().from(gateways).where(eq(gateways.name, name)).get();
}

export function listGateways(): GatewayRow[] {
  return getDb().select().from(gateways).orderBy(asc(gateways.name)).all();
}

export function insertGateway(input: {
  name: string;
  keyHash: string;
  keyPrefix: string;
  createdBy: number | null;
}): GatewayRow {
  return getDb().insert(gateways).values(input).returning().get();
}

export function revokeGateway(id: number, atMs = Date.now()): GatewayRow | undefined {
  return getDb()
    .update(gateways)
    .set({ revokedAt: atMs })
    .where(eq(gateways.id, id))
    .returning()
    .get();
}
