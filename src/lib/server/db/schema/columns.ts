import { integer } from "drizzle-orm/sqlite-core";

/** Epoch milliseconds. Every time in Plinth's database is stored this way. */
export const epochMs = (name: string) => integer(name);

/** A creation time that defaults to the insert's own clock, in epoch milliseconds. */
export const createdAtMs = () =>
  integer("created_at")
    .notNull()
    .$defaultFn(() => Date.now());

export const bool = (name: string) => integer(name, { mode: "boolean" });
