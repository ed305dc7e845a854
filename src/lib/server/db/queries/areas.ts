import { getDb } from "../client";
import { areas } from "../schema";

export type AreaRow = typeof areas.$inferSelect;

export function insertArea(input: {
  name: string;
  kind: AreaRow["kind"];
  description: string | null;
  sortOrder: number;
}): AreaRow {
  return getDb().insert(areas).values(input).returning().get();
}
